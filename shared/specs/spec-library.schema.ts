/**
 * The spec library: a builder's own specs and those others share, each with immutable versions.
 * Figures are decimal text in the version's unit; `toEngineSpec` turns a version into the
 * engine's `Spec`, whose schema (shared/measure/spec.schema.ts) holds the band rules.
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { figureTextIn } from '../measure/quantity-text';
import { specUnitSchema } from '../measure/record-units';
import { decisionRules, DEFAULT_DECISION_RULE } from '../measure/spec';
import { specSchema as engineSpecSchema, specSourceSchema, type Spec as EngineSpec } from '../measure/spec.schema';

/** A limit as typed. */
const limitText = z.string({ error: 'enter a figure' }).trim().min(1, 'enter a figure').max(64, 'that is too long for a figure');

/** The figures of one version, as typed: a length, another quantity, or a ratio (unit "1"). */
const versionFields = {
  unit: specUnitSchema,
  min: limitText.nullable().default(null),
  max: limitText.nullable().default(null),
  preferredMin: limitText.nullable().default(null),
  preferredMax: limitText.nullable().default(null),
  reject: limitText.nullable().default(null),
  rule: z.enum(decisionRules, { error: 'rule must be "guarded" or "simple"' }).default(DEFAULT_DECISION_RULE),
  source: specSourceSchema,
  note: z.string().trim().max(2000, 'at most 2000 characters').default(''),
};

type VersionFigures = {
  unit: z.infer<typeof specUnitSchema>;
  min: string | null;
  max: string | null;
  preferredMin: string | null;
  preferredMax: string | null;
  reject: string | null;
  rule: (typeof decisionRules)[number];
  source: z.infer<typeof specSourceSchema>;
};

const enginePath: Record<string, string> = { min: 'min', max: 'max', preferred: 'preferredMin', reject: 'reject', rule: 'rule', source: 'source' };

/** Checks the figures with the engine's spec rules, naming our fields in the issues. */
function refineFigures(v: VersionFigures, ctx: z.RefinementCtx) {
  const normal = normaliseSpecFigures(v);
  if (!normal.ok) {
    for (const [field, message] of normal.problems) ctx.addIssue({ code: 'custom', path: [field], message });
    return;
  }
  const result = engineSpecSchema.safeParse(toEngineSpec({ ...normal.figures, version: 1 }));
  if (result.success) return;
  for (const issue of result.error.issues) {
    const [head, sub] = issue.path.map(String);
    // Our own fields already check the source and rule with the same schemas; repeating the
    // engine's copy would report one problem twice, the second time at a vaguer path.
    if (head === 'source' || head === 'rule') continue;
    const path = head === 'preferred' ? (sub === 'max' ? 'preferredMax' : 'preferredMin') : (enginePath[head ?? ''] ?? head ?? 'min');
    ctx.addIssue({ code: 'custom', path: [path], message: issue.message.replace(/preferred\.min/g, 'preferredMin').replace(/preferred\.max/g, 'preferredMax') });
  }
}

const figureFields = ['min', 'max', 'preferredMin', 'preferredMax', 'reject'] as const;

/**
 * The figures as plain decimal text in the unit ("0.003 in" → "0.003", "10.2:1" → "10.2"), as
 * they are stored; or the fields that are not figures in the unit.
 */
export function normaliseSpecFigures<T extends VersionFigures>(
  v: T,
): { ok: true; figures: T } | { ok: false; problems: [string, string][] } {
  const figures = { ...v };
  const problems: [string, string][] = [];
  for (const field of figureFields) {
    const text = v[field];
    if (text === null) continue;
    const parsed = figureTextIn(text, v.unit);
    if (parsed.ok) figures[field] = parsed.text;
    else problems.push([field, parsed.message]);
  }
  return problems.length ? { ok: false, problems } : { ok: true, figures };
}

/** Body of `POST /api/specs/:specId/versions`: a new version (versions are never edited). */
export const specVersionInputSchema = z.strictObject(versionFields).superRefine(refineFigures);
export type SpecVersionInput = z.input<typeof specVersionInputSchema>;

/** Body of `POST /api/specs`: the spec and its first version. */
export const specInputSchema = z
  .strictObject({
    name: textWithoutNul.trim().min(3, 'name the spec (at least 3 characters)').max(160, 'at most 160 characters'),
    appliesTo: textWithoutNul.trim().max(200, 'at most 200 characters').default(''),
    shared: z.boolean().default(false),
    ...versionFields,
  })
  .superRefine(refineFigures);
export type SpecInput = z.input<typeof specInputSchema>;

/** Body of `PATCH /api/specs/:specId`: name, what it applies to, shared; figures change by a new version. */
export const specPatchSchema = z
  .strictObject({
    name: textWithoutNul.trim().min(3).max(160),
    appliesTo: textWithoutNul.trim().max(200),
    shared: z.boolean(),
    lockVersion: dbPositiveInteger,
  })
  .partial()
  .required({ lockVersion: true });
export type SpecPatch = z.infer<typeof specPatchSchema>;

/** One version as the API shows it. */
export const specVersionSchema = z.object({
  id: z.number().int().positive(),
  specId: z.number().int().positive(),
  version: z.number().int().positive(),
  unit: specUnitSchema,
  min: z.string().nullable(),
  max: z.string().nullable(),
  preferredMin: z.string().nullable(),
  preferredMax: z.string().nullable(),
  reject: z.string().nullable(),
  rule: z.enum(decisionRules),
  source: specSourceSchema,
  note: z.string(),
  createdAt: z.string(),
});
export type SpecVersion = z.infer<typeof specVersionSchema>;

/** A spec with its newest version (and, from GET one, every version, newest first). */
export const specSchema = z.object({
  id: z.number().int().positive(),
  ownerId: z.number().int().positive(),
  ownerName: z.string(),
  name: z.string(),
  appliesTo: z.string(),
  shared: z.boolean(),
  latest: specVersionSchema,
  versions: z.array(specVersionSchema).optional(),
  lockVersion: z.number().int().positive(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type LibrarySpec = z.infer<typeof specSchema>;

export const specResponseSchema = z.object({ spec: specSchema });
export const specVersionResponseSchema = z.object({ version: specVersionSchema });
/** Query of `GET /api/specs`: own and shared specs; `q` searches name and applies-to; `mine=1` own only. */
export const specListQuerySchema = z.object({
  q: textWithoutNul.trim().max(100).optional(),
  mine: z.enum(['0', '1']).optional(),
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
});
export const specListResponseSchema = z.object({ items: z.array(specSchema), nextAfter: z.number().int().nullable() });
export const specIdParamsSchema = z.object({ specId: dbIdText });

/** A version's figures as the engine's spec (numbers in the version's unit). */
export function toEngineSpec(v: VersionFigures & { version: number }): EngineSpec {
  const n = (t: string | null) => (t === null ? undefined : Number(t));
  const preferred = v.preferredMin !== null || v.preferredMax !== null ? { min: n(v.preferredMin), max: n(v.preferredMax) } : undefined;
  return {
    unit: v.unit,
    ...(v.min !== null && { min: n(v.min) }),
    ...(v.max !== null && { max: n(v.max) }),
    ...(preferred && { preferred: Object.fromEntries(Object.entries(preferred).filter(([, x]) => x !== undefined)) }),
    ...(v.reject !== null && { reject: n(v.reject) }),
    rule: v.rule,
    source: v.source,
    version: v.version,
  } as EngineSpec;
}
