import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { QueryTypes, type Transaction } from 'sequelize';
import type { Clearance as ClearanceDto } from '@shared/clearances/clearance.schema';
import type { CalibrationState } from '@shared/instruments/instrument.schema';
import { defaultUnitFor, formatResult, systemOf, type UnitSystem } from '@shared/measure/format';
import { micrometresToPicometres, type LengthUnit } from '@shared/measure/units';
import type { PublicBuilderRef, PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import type { Reading as ReadingDto } from '@shared/readings/reading.schema';
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
  readings: (ReadingDto & { checked: CheckedRecord })[];
  clearances: (ClearanceDto & { checked: CheckedRecord })[];
}

/** The evidence of a publication, with missing lists read as empty (the column is JSON). */
export function evidenceOf(publication: Pick<StoryPublication, 'evidence'>): PublishedEvidence {
  const e = publication.evidence as Partial<PublishedEvidence>;
  return { buildId: Number(e.buildId), claims: e.claims ?? [], readings: e.readings ?? [], clearances: e.clearances ?? [] };
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
  return {
    id: r.id,
    key: r.key,
    name: r.name,
    kind: r.kind,
    unit: r.unit,
    entered: r.entered,
    value: r.value,
    passes: r.passes,
    stops: r.stops,
    values: r.values,
    display: target.display,
    converted: convertedDisplay(r.result.valueUm, target.expandedUncertaintyUm, 2, r.unit, units),
    valueUm: r.result.valueUm,
    standardUncertaintyUm: r.result.standardUncertaintyUm,
    expandedUncertaintyUm: target.expandedUncertaintyUm,
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
  };
}

function publicCheck(c: CheckedRecord) {
  return { by: c.by, byName: c.byName, at: c.at, lockVersion: c.lockVersion };
}

/** A published clearance as the public sees it; null when it could not be worked out (never published so). */
export function publicClearance(c: PublishedEvidence['clearances'][number], units: UnitSystem | null): PublicClearance | null {
  const r = c.result;
  if (!r) return null;
  return {
    id: c.id,
    key: c.key,
    name: c.name,
    unit: r.unit,
    valueUm: r.valueUm,
    standardUncertaintyUm: r.standardUncertaintyUm,
    expandedUncertaintyUm: r.expandedUncertaintyUm,
    coverageFactor: r.coverageFactor,
    display: r.display,
    converted: convertedDisplay(r.valueUm, r.expandedUncertaintyUm, r.coverageFactor, r.unit, units),
    verdict: r.verdict,
    preferredVerdict: r.preferredVerdict,
    rejectVerdict: r.rejectVerdict,
    rule: r.rule,
    band: r.band,
    spec: c.spec ? { name: c.spec.name, version: c.spec.version, sourceKind: c.spec.sourceKind, sourceText: c.spec.sourceText } : null,
    terms: c.terms,
    steps: r.steps,
    checked: publicCheck(c.checked),
    ...(r.method !== undefined && {
      method: r.method,
      coverageProbability: r.coverageProbability,
      fixedCoverageFactor: r.fixedCoverageFactor ?? false,
      effectiveDegreesOfFreedom: r.effectiveDegreesOfFreedom ?? null,
      intervalUm: r.intervalUm,
      probabilityOfConformance: r.probabilityOfConformance ?? null,
      budget: r.budget,
      warnings: r.warnings,
    }),
  };
}
