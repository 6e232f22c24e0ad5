import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { QueryTypes, type Transaction } from 'sequelize';
import type { Clearance as ClearanceDto } from '@shared/clearances/clearance.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import type { CalibrationState } from '@shared/instruments/instrument.schema';
import { defaultUnitFor, formatResult, systemOf, type UnitSystem } from '@shared/measure/format';
import { micrometresToPicometres, picometresPerUnit, type LengthUnit } from '@shared/measure/units';
import type { PublicBuilderRef, PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { convertedQuantityDisplay, firstNumberDecimals } from '@shared/public/quantity-figures';
import type { Reading as ReadingDto } from '@shared/readings/reading.schema';
import type { HeardWitness } from '@shared/review/heard';
import { claimTargetsFrom, claimTargetKey } from '@shared/stories/claims';
import { StoryPublication } from '../review/review.model';
import type { User } from '../users/user.model';

/*
 * Reading publications: the evidence a moderator published (readings and clearances as judged,
 * each with who checked it), and which publications the public may see now.
 */

/** Who checked a subject, as the publication recorded it. */
export interface CheckedRecord {
  checkId?: number;
  by: number;
  byName: string;
  at: string;
  lockVersion: number;
}

/** A claim as published. */
export interface PublishedClaim {
  kind: 'reading' | 'clearance';
  key: string;
  text: string;
  line: number;
  status: string;
  display: string | null;
  verdict: string | null;
  subjectId: number | null;
}

/** The `evidence` column of a publication. */
export interface PublishedEvidence {
  buildId: number;
  claims: PublishedClaim[];
  /** `heard`: what the clip's sound said near the reading's moment when it was published; absent from publications before it. */
  readings: (ReadingDto & { checked: CheckedRecord; heard?: HeardWitness })[];
  clearances: (ClearanceDto & { checked: CheckedRecord })[];
}

/** The evidence of a publication, with missing lists read as empty (the column is JSON) and older figures brought up to date. */
export function evidenceOf(publication: Pick<StoryPublication, 'evidence'>): PublishedEvidence {
  const e = publication.evidence as Partial<PublishedEvidence>;
  return {
    buildId: Number(e.buildId),
    claims: e.claims ?? [],
    readings: (e.readings ?? []).map(currentReading),
    clearances: (e.clearances ?? []).map(currentClearance),
  };
}

type StoredReading = PublishedEvidence['readings'][number];
type StoredClearance = PublishedEvidence['clearances'][number];

/** µm in one of a length unit (exact: NIST SP 811 B.8). */
const umPer = (unit: LengthUnit) => Number(picometresPerUnit[unit]) / 1e6;

/**
 * A reading as published, in today's shape. Publications made before other quantities could be
 * stored hold lengths with µm figures only and no `quantity`: they are lengths, and their figures
 * in the reading's unit follow from the µm ones. The JSON is not parsed, so nothing else adds it.
 */
function currentReading(r: StoredReading): StoredReading {
  const result = r.result as StoredReading['result'] & { quantity?: StoredReading['result']['quantity'] };
  if (result.quantity !== undefined && result.value !== undefined && result.standardUncertainty !== undefined) return r;
  const quantity = result.quantity ?? 'length';
  const isLength = quantity === 'length' && result.valueUm !== null;
  return {
    ...r,
    result: {
      ...result,
      quantity,
      value: result.value ?? (isLength ? result.valueUm! / umPer(r.unit as LengthUnit) : 0),
      standardUncertainty: result.standardUncertainty ?? (isLength ? (result.standardUncertaintyUm ?? 0) / umPer(r.unit as LengthUnit) : 0),
    },
  };
}

/** A result as published, in today's shape: a signed sum of lengths when it predates formulas and other quantities. */
function currentClearance(c: StoredClearance): StoredClearance {
  const stored = c as StoredClearance & Partial<Pick<StoredClearance, 'formula' | 'constants' | 'resultUnit'>>;
  const result = c.result as (StoredClearance['result'] & { quantity?: NonNullable<StoredClearance['result']>['quantity'] }) | null;
  return {
    ...c,
    formula: stored.formula ?? null,
    constants: stored.constants ?? {},
    resultUnit: stored.resultUnit ?? null,
    terms: c.terms.map((t) => ({ ...t, symbol: (t as Partial<typeof t>).symbol ?? null })),
    result: result && { ...result, quantity: result.quantity ?? 'length' },
  };
}

/**
 * SQL condition, on `stories s`, for "its published revision is shown to the public now": it has
 * one, and no withdrawal stands (the same rule as review's isPublicNow).
 */
export const PUBLIC_STORY_SQL = `s.published_publication_id IS NOT NULL AND s.withdrawn_by IS NULL AND s.state <> 'withdrawn'`;

/** The current public publication of every public story of a build (or of the given builds). */
export async function currentPublications(where: { buildIds?: number[]; storyIds?: number[] }, transaction?: Transaction): Promise<StoryPublication[]> {
  const conditions = [PUBLIC_STORY_SQL];
  const replacements: Record<string, unknown> = {};
  if (where.buildIds) {
    if (where.buildIds.length === 0) return [];
    conditions.push('s.build_id IN (:buildIds)');
    replacements.buildIds = where.buildIds;
  }
  if (where.storyIds) {
    if (where.storyIds.length === 0) return [];
    conditions.push('s.id IN (:storyIds)');
    replacements.storyIds = where.storyIds;
  }
  const rows = await StoryPublication.sequelize!.query<{ id: number }>(
    `SELECT s.published_publication_id AS id FROM stories s WHERE ${conditions.join(' AND ')}`,
    { type: QueryTypes.SELECT, replacements, transaction },
  );
  if (rows.length === 0) return [];
  return StoryPublication.findAll({ where: { id: rows.map((r) => r.id) }, order: [['publishedAt', 'ASC'], ['id', 'ASC']], transaction });
}

/** Public addresses of a clip's media. */
export function publicClipUrls(clipId: number, atMs: number) {
  const base = `/api/public/clips/${clipId}`;
  return { stillUrl: `${base}/frame?t=${(atMs / 1000).toFixed(3)}`, clipUrl: `${base}/video`, posterUrl: `${base}/poster` };
}

/** A builder as the public sees them. */
export function builderRef(u: Pick<User, 'id' | 'login' | 'displayName' | 'shop'>): PublicBuilderRef {
  return { id: u.id, login: u.login, displayName: u.displayName, shop: u.shop ?? null };
}

/** A figure in the other system, "0.119 mm ± 0.0079 mm (k = 2)", or null when it is already in `units`. */
export function convertedDisplay(valueUm: number, expandedUm: number, k: number, unit: LengthUnit, units: UnitSystem | null): string | null {
  if (!units || systemOf(unit) === units) return null;
  const shown = formatResult(micrometresToPicometres(valueUm), expandedUm, defaultUnitFor(units));
  return `${shown.value} ± ${shown.uncertainty} (k = ${formatCoverageFactor(k)})`;
}

/** The calibration state on the day of a reading, from the warnings it was judged with. */
export function calibrationFromWarnings(warnings: readonly { code: string }[]): CalibrationState {
  if (warnings.some((w) => w.code === 'calibration-overdue')) return 'overdue';
  if (warnings.some((w) => w.code === 'no-calibration-record')) return 'no-record';
  return 'in-date';
}

/** A published reading as the public sees it (figures as judged, media at public addresses). */
export function publicReading(r: PublishedEvidence['readings'][number], units: UnitSystem | null): PublicReading {
  // The same display and U the claim was checked against.
  const target = claimTargetsFrom([r], []).get(claimTargetKey('reading', r.key))!;
  const quantity = r.result.quantity;
  const isLength = quantity === 'length' && r.result.valueUm !== null;
  return {
    id: r.id,
    key: r.key,
    name: r.name,
    kind: r.kind,
    quantity,
    unit: r.unit,
    entered: r.entered,
    value: r.value,
    passes: r.passes,
    stops: r.stops,
    values: r.values,
    display: target.display,
    converted: isLength
      ? convertedDisplay(r.result.valueUm!, target.expandedUncertaintyUm, 2, r.unit as LengthUnit, units)
      : convertedQuantityDisplay({ unit: r.unit, value: target.value, expandedUncertainty: target.expandedUncertainty, decimals: firstNumberDecimals(r.result.display) }, 2, units),
    valueUm: isLength ? r.result.valueUm : null,
    standardUncertaintyUm: isLength ? r.result.standardUncertaintyUm : null,
    expandedUncertaintyUm: isLength ? target.expandedUncertaintyUm : null,
    estimate: target.value,
    standardUncertainty: r.result.standardUncertainty ?? target.expandedUncertainty / 2,
    expandedUncertainty: target.expandedUncertainty,
    steps: r.result.steps,
    // What the engine was given, so a reader can run it through the public calculator.
    engine: r.engine,
    ...(r.engineInstrument && { engineInstrument: r.engineInstrument }),
    takenOn: r.takenOn,
    temperatureC: r.temperatureC,
    material: r.material,
    part: r.partId === null ? null : { id: r.partId, name: r.partName ?? '' },
    instrument: { id: r.instrumentId, name: r.instrumentName, calibration: calibrationFromWarnings(r.warnings) },
    zeroCheck: r.zeroCheck ? { offset: r.zeroCheck.offset, unit: r.zeroCheck.unit } : null,
    warnings: r.warnings,
    moment: { momentId: r.momentId, clipId: r.clipId, clipTitle: r.clipTitle, atMs: r.atMs, ...publicClipUrls(r.clipId, r.atMs) },
    checked: publicCheck(r.checked),
    ...(r.heard && { heard: publicHeard(r.heard) }),
  };
}

/**
 * The witness as readers get it: its state, and for a figure heard, the words and when they were
 * said (the moderator's line speaks of "the logged" figure; the page says it in its own words).
 */
function publicHeard(h: HeardWitness): NonNullable<PublicReading['heard']> {
  return {
    state: h.state,
    ...(h.words !== undefined && { words: h.words }),
    ...(h.atMs !== undefined && { atMs: h.atMs }),
    ...(h.source === 'display' && { source: 'display' as const }),
  };
}

function publicCheck(c: CheckedRecord) {
  return { by: c.by, byName: c.byName, at: c.at, lockVersion: c.lockVersion };
}

/** A published clearance as the public sees it; null when it could not be worked out (never published so). */
export function publicClearance(c: PublishedEvidence['clearances'][number], units: UnitSystem | null): PublicClearance | null {
  const r = c.result;
  if (!r) return null;
  const figures = resultFigures(r);
  const isLength = figures.quantity === 'length' && r.valueUm !== null && r.expandedUncertaintyUm !== null;
  return {
    id: c.id,
    key: c.key,
    name: c.name,
    quantity: figures.quantity,
    unit: r.unit,
    valueUm: isLength ? r.valueUm : null,
    standardUncertaintyUm: isLength ? r.standardUncertaintyUm : null,
    expandedUncertaintyUm: isLength ? r.expandedUncertaintyUm : null,
    value: figures.value,
    standardUncertainty: figures.standardUncertainty,
    expandedUncertainty: figures.expandedUncertainty,
    interval: figures.interval,
    coverageFactor: r.coverageFactor,
    display: r.display,
    converted: isLength
      ? convertedDisplay(r.valueUm!, r.expandedUncertaintyUm!, r.coverageFactor, r.unit as LengthUnit, units)
      : convertedQuantityDisplay({ unit: r.unit, value: figures.value, expandedUncertainty: figures.expandedUncertainty, decimals: firstNumberDecimals(r.display) }, r.coverageFactor, units),
    verdict: r.verdict,
    preferredVerdict: r.preferredVerdict,
    rejectVerdict: r.rejectVerdict,
    rule: r.rule,
    band: isLength ? r.band : null,
    bandInUnit: r.bandInUnit ?? null,
    spec: c.spec ? { name: c.spec.name, version: c.spec.version, sourceKind: c.spec.sourceKind, sourceText: c.spec.sourceText } : null,
    terms: c.terms.map((t) => ({ readingId: t.readingId, readingKey: t.readingKey, readingName: t.readingName, sign: t.sign, symbol: t.symbol })),
    // What a reader's "Recompute" needs to run a formula again: the formula, its constants and the unit asked for.
    formula: c.formula,
    constants: c.constants,
    resultUnit: c.resultUnit,
    steps: r.steps,
    checked: publicCheck(c.checked),
    ...(r.method !== undefined && {
      method: r.method,
      coverageProbability: r.coverageProbability,
      fixedCoverageFactor: r.fixedCoverageFactor ?? false,
      effectiveDegreesOfFreedom: r.effectiveDegreesOfFreedom ?? null,
      ...(r.intervalUm && { intervalUm: r.intervalUm }),
      probabilityOfConformance: r.probabilityOfConformance ?? null,
      budget: r.budget,
      warnings: r.warnings,
    }),
  };
}
