import type { FieldErrors, Resolver, ResolverResult } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import type { SpecSourceKind } from '@shared/measure/spec.schema';
import type { DecisionRule } from '@shared/measure/spec';
import { defaultUnitFor, type AnyUnit } from '@shared/measure/quantities';
import type { DefaultUnits } from '@/features/auth/lib/default-units';
import { specInputSchema, specVersionInputSchema, type SpecVersion } from '@shared/specs/spec-library.schema';

/** A version's figures as typed: blank boxes are "no such limit". */
export interface SpecFiguresValues {
  /** Any unit: a length, another quantity, or "1" for a ratio (compression ratio 10.2:1). */
  unit: AnyUnit;
  min: string;
  max: string;
  preferredMin: string;
  preferredMax: string;
  reject: string;
  rule: DecisionRule;
  source: { kind: SpecSourceKind; text: string };
  note: string;
}

/** A new spec as typed: its name and sharing, and the figures of version 1. */
export interface SpecCreateValues extends SpecFiguresValues {
  name: string;
  appliesTo: string;
  shared: boolean;
}

/** The figure boxes, in the order they appear. */
export const figureNames = ['min', 'max', 'preferredMin', 'preferredMax', 'reject'] as const;

export const blankFigures: SpecFiguresValues = {
  unit: 'in',
  min: '',
  max: '',
  preferredMin: '',
  preferredMax: '',
  reject: '',
  rule: 'guarded',
  source: { kind: 'manual', text: '' },
  note: '',
};

export const blankSpec: SpecCreateValues = { name: '', appliesTo: '', shared: false, ...blankFigures };

/** A new spec in the builder's length unit (in or mm) when they chose a system, else inches. */
export function blankSpecFor(defaults: DefaultUnits): SpecCreateValues {
  return defaults.system ? { ...blankSpec, unit: defaultUnitFor('length', defaults.system) } : blankSpec;
}

/** A stored version as the starting point of the next one. */
export function figuresFrom(v: SpecVersion): SpecFiguresValues {
  return {
    unit: v.unit,
    min: v.min ?? '',
    max: v.max ?? '',
    preferredMin: v.preferredMin ?? '',
    preferredMax: v.preferredMax ?? '',
    reject: v.reject ?? '',
    rule: v.rule,
    source: { kind: v.source.kind, text: v.source.text },
    note: '',
  };
}

/** Typed figures → the body the API takes (blank → null). */
export function figuresBody(values: SpecFiguresValues) {
  const orNull = (text: string) => (text.trim() === '' ? null : text);
  return {
    unit: values.unit,
    min: orNull(values.min),
    max: orNull(values.max),
    preferredMin: orNull(values.preferredMin),
    preferredMax: orNull(values.preferredMax),
    reject: orNull(values.reject),
    rule: values.rule,
    source: { kind: values.source.kind, text: values.source.text },
    note: values.note,
  };
}

type SpecOutput = z.output<typeof specInputSchema>;
type VersionOutput = z.output<typeof specVersionInputSchema>;

/** `specInputSchema`, the schema the server validates a new spec with. */
export function specCreateResolver(): Resolver<SpecCreateValues, unknown, SpecOutput> {
  const base = zodResolver(specInputSchema);
  return async (values, context, options): Promise<ResolverResult<SpecCreateValues, SpecOutput>> => {
    const result = await base(
      { name: values.name, appliesTo: values.appliesTo, shared: values.shared, ...figuresBody(values) },
      context,
      options as never,
    );
    if (Object.keys(result.errors).length > 0) return { values: {}, errors: result.errors as FieldErrors<SpecCreateValues> };
    return { values: result.values as SpecOutput, errors: {} };
  };
}

/** `specVersionInputSchema`, the schema the server validates a new version with. */
export function specVersionResolver(): Resolver<SpecFiguresValues, unknown, VersionOutput> {
  const base = zodResolver(specVersionInputSchema);
  return async (values, context, options): Promise<ResolverResult<SpecFiguresValues, VersionOutput>> => {
    const result = await base(figuresBody(values), context, options as never);
    if (Object.keys(result.errors).length > 0) return { values: {}, errors: result.errors as FieldErrors<SpecFiguresValues> };
    return { values: result.values as VersionOutput, errors: {} };
  };
}

/** Field paths of the figures forms, for mapping the server's `details[].path` back onto them. */
export const specFormPaths: ReadonlySet<string> = new Set([
  'name',
  'appliesTo',
  'shared',
  'unit',
  ...figureNames,
  'rule',
  'source',
  'source.kind',
  'source.text',
  'note',
]);
