/**
 * A spec as builders keep it: limits, an optional preferred band inside them, an optional reject
 * (scrap) limit outside them, where the figures come from, and a version so a verdict can name
 * the spec it was judged against.
 */
import { z } from 'zod';
import { lengthFieldProblem, lengthNumberToPicometres } from './length-field';
import {
  DEFAULT_DECISION_RULE,
  decisionRules,
  type BandPm,
  type DecisionRule,
  judge,
  judgeRejectLimit,
  type Judgement,
  type RejectSide,
} from './spec';
import { anyUnitSchema } from './calc.schema';
import { quantityOf } from './quantities';
import type { LengthUnit } from './units';

/** Where a spec's figures come from. */
export const specSourceKinds = ['manual', 'standard', 'common-practice'] as const;

/** A kind of spec source. */
export type SpecSourceKind = (typeof specSourceKinds)[number];

/** The citation every spec carries. */
export const specSourceSchema = z.strictObject({
  kind: z.enum(specSourceKinds, { error: 'source.kind must be "manual", "standard" or "common-practice"' }),
  text: z
    .string({ error: 'source.text is required' })
    .trim()
    .min(3, 'source.text must say where the figures come from')
    .max(500, 'source.text must be at most 500 characters'),
});

const optionalLength = (field: string) =>
  z.number({ error: `${field} must be a finite number` }).optional();

/** A stored spec. Figures are in `unit`: a length, any other quantity, or "1" for a ratio. */
export const specSchema = z
  .strictObject({
    unit: anyUnitSchema,
    min: optionalLength('min'),
    max: optionalLength('max'),
    preferred: z.strictObject({ min: optionalLength('preferred.min'), max: optionalLength('preferred.max') }).optional(),
    reject: optionalLength('reject'),
    rule: z.enum(decisionRules, { error: 'rule must be "guarded" or "simple"' }).default(DEFAULT_DECISION_RULE),
    source: specSourceSchema,
    version: z.number({ error: 'version must be a whole number' }).int('version must be a whole number').min(1, 'version starts at 1'),
  })
  .superRefine((spec, ctx) => {
    const check = (path: (string | number)[], value: number | undefined) => {
      if (value === undefined) return;
      if (quantityOf(spec.unit) !== 'length') {
        if (!Number.isFinite(value) || Math.abs(value) > 1e9) ctx.addIssue({ code: 'custom', path, message: `${path.join('.')} is too large` });
        return;
      }
      const problem = lengthFieldProblem(path.join('.'), value, spec.unit as LengthUnit);
      if (problem) ctx.addIssue({ code: 'custom', path, message: problem.message });
    };
    check(['min'], spec.min);
    check(['max'], spec.max);
    check(['preferred', 'min'], spec.preferred?.min);
    check(['preferred', 'max'], spec.preferred?.max);
    check(['reject'], spec.reject);
    const { min, max, preferred, reject } = spec;
    if (min === undefined && max === undefined) ctx.addIssue({ code: 'custom', path: ['min'], message: 'spec needs a min, a max or both' });
    if (min !== undefined && max !== undefined && min > max) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'min must not be greater than max' });
    }
    if (preferred) {
      if (preferred.min === undefined && preferred.max === undefined) {
        ctx.addIssue({ code: 'custom', path: ['preferred'], message: 'preferred needs a min, a max or both' });
      }
      const pMin = preferred.min ?? min;
      const pMax = preferred.max ?? max;
      if (pMin !== undefined && pMax !== undefined && pMin > pMax) {
        ctx.addIssue({ code: 'custom', path: ['preferred', 'min'], message: 'preferred.min must not be greater than preferred.max' });
      }
      if ((min !== undefined && pMin !== undefined && pMin < min) || (max !== undefined && pMax !== undefined && pMax > max)) {
        ctx.addIssue({ code: 'custom', path: ['preferred'], message: 'preferred band must lie inside min…max' });
      }
    }
    if (reject !== undefined && rejectSideOf(spec) === null) {
      ctx.addIssue({ code: 'custom', path: ['reject'], message: 'reject must lie outside the band: at or above max, or at or below min' });
    }
  });

/** A validated spec. */
export type Spec = z.output<typeof specSchema>;
/** A spec as written before defaults apply. */
export type SpecInput = z.input<typeof specSchema>;

/**
 * Which side of the band the reject limit is on: upper when at or above max, lower when at or
 * below min (an upper side wins for a one-sided max spec). Null when it lies inside the band.
 */
export function rejectSideOf(spec: Pick<Spec, 'min' | 'max' | 'reject'>): RejectSide | null {
  const { min, max, reject } = spec;
  if (reject === undefined) return null;
  if (max !== undefined && reject >= max) return 'upper';
  if (min !== undefined && reject <= min) return 'lower';
  return null;
}

function pm(value: number | undefined, spec: Spec): bigint | undefined {
  if (value === undefined || quantityOf(spec.unit) !== 'length') return undefined;
  return lengthNumberToPicometres(value, spec.unit as LengthUnit) ?? undefined;
}

function band(minPm: bigint | undefined, maxPm: bigint | undefined): BandPm {
  return { ...(minPm !== undefined && { minPm }), ...(maxPm !== undefined && { maxPm }) };
}

/** A value judged against every part of a spec. */
export interface SpecJudgement {
  /** Against min…max: the verdict. */
  readonly band: Judgement;
  /** Against the preferred band, by the same rule; null when the spec has none. */
  readonly preferred: Judgement | null;
  /** Against the reject limit, by the same rule ("conforms" = clear of it); null when none. */
  readonly reject: (Judgement & { side: RejectSide }) | null;
  /** Limits in picometres, for a band picture. */
  readonly limitsPm: { band: BandPm; preferred: BandPm | null; rejectPm: bigint | null };
  readonly spec: Spec;
}

/**
 * Judges a value (picometres) with expanded uncertainty U (picometres) against a validated spec,
 * by the spec's rule unless `rule` overrides it.
 */
export function judgeSpec(valuePm: bigint, expandedPm: bigint, spec: Spec, rule: DecisionRule = spec.rule): SpecJudgement {
  const mainBand = band(pm(spec.min, spec), pm(spec.max, spec));
  const preferredBand = spec.preferred
    ? band(pm(spec.preferred.min ?? spec.min, spec), pm(spec.preferred.max ?? spec.max, spec))
    : null;
  const side = rejectSideOf(spec);
  const rejectPm = side ? (pm(spec.reject, spec) ?? null) : null;
  return {
    band: judge(valuePm, expandedPm, mainBand, rule),
    preferred: preferredBand ? judge(valuePm, expandedPm, preferredBand, rule) : null,
    reject: side && rejectPm !== null ? { ...judgeRejectLimit(valuePm, expandedPm, rejectPm, side, rule), side } : null,
    limitsPm: { band: mainBand, preferred: preferredBand, rejectPm },
    spec,
  };
}
