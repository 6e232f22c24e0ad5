import { calibrationDueOn, type CalibrationState } from '@shared/instruments/instrument.schema';
import { resultFigures } from '@shared/clearances/result-figures';
import { convertWrittenLength, symbolFor } from '@shared/measure/format';
import { formatConvertedFigure, withUnit } from '@shared/measure/format-quantity';
import { quantityOf, type AnyUnit } from '@shared/measure/quantities';
import { decisionRuleText, verdictWords } from '@shared/measure/spec';
import type { PartSheet, SheetClearance, SheetReading, VerifySheet } from '@shared/public/sheet.schema';
import { limitFacts, specLimitTexts, specLimitTextsIn, type SpecLimitTexts } from '@shared/public/spec-limits';
import { isLengthUnit } from '@shared/measure/units';
import { STANDING_NOTE } from '@shared/stories/cautions';
import { AppError, notFound } from '../../http/errors';
import { Build, Part } from '../builds/build.model';
import { Instrument } from '../instruments/instrument.model';
import { builderRef, calibrationFromWarnings, currentPublications, evidenceOf, type PublishedEvidence } from '../public/publication';
import { StoryPublication } from '../review/review.model';
import { Story } from '../stories/story.model';
import { User } from '../users/user.model';

/** Printed on every sheet and shown on the verification page. */
export const SHEET_CAUTION = `These figures are the builder’s own, measured with their instruments and checked by a moderator against the footage; this sheet is a record of their work, not a certificate. ${STANDING_NOTE}`;

const calibrationRank: Record<CalibrationState, number> = { 'in-date': 0, 'no-record': 1, overdue: 2 };

/** The verification page a sheet's QR code opens: one story/rev pair per entry printed. */
export function verifyUrlFor(publicUrl: string, partId: number, entries: { storyId: number; revision: number }[]): string {
  const query = entries.map((e) => `story=${e.storyId}&rev=${e.revision}`).join('&');
  return `${publicUrl}/verify/parts/${partId}?${query}`;
}

const missing = () => notFound('There is no public inspection sheet for that part.');

/** A number as written with its unit's symbol: lengths as format.ts writes them ("3.5 thou"), any other unit as SI spaces it ("35 lbf·ft", "108°", "10.2"). */
function withSymbol(numberText: string, unit: AnyUnit): string {
  return isLengthUnit(unit) ? `${numberText} ${symbolFor(unit, numberText)}` : withUnit(numberText, unit);
}

/** A zero offset as taken off, with its sign and as written: "+0.0001 in", "−0.002 mm", "−0.5 psi", "0 g". */
export function zeroOffsetText(offset: string, unit: AnyUnit): string {
  const text = offset.trim();
  const negative = text.startsWith('-') || text.startsWith('−');
  const digits = text.replace(/^[+−-]/, '');
  const sign = /[1-9]/.test(digits) ? (negative ? '−' : '+') : '';
  return withSymbol(`${sign}${digits}`, unit);
}

type PublishedReading = PublishedEvidence['readings'][number];

/** What the instrument showed, before any zero offset, in the reading's unit. */
function readText(r: Pick<PublishedReading, 'kind' | 'unit' | 'value' | 'values' | 'passes' | 'stops'>): string {
  if (r.kind === 'bracket') return `blade ${r.passes ?? '?'} enters, ${r.stops ?? '?'} does not (${isLengthUnit(r.unit) ? symbolFor(r.unit, '') : withUnit('', r.unit).trim()})`;
  if (r.kind === 'repeated') {
    const values = r.values ?? [];
    // The symbol once, after the last value (and spoken for it: "1 tenth").
    const last = values.at(-1) ?? '';
    return isLengthUnit(r.unit) ? `${values.join(', ')} ${symbolFor(r.unit, last)}` : withUnit(values.join(', '), r.unit);
  }
  return withSymbol(r.value ?? '?', r.unit);
}

/**
 * A reading's figure in the unit of the result it belongs to, at the places it was written to
 * (NIST SP 811 B.7.2): "3.5 thou" in a clearance in inches is "0.0035 in". A reading of another
 * quantity than its result (a chamber's cc in a compression ratio) keeps its own unit.
 */
function figureIn(r: PublishedReading, resultUnit: AnyUnit): string {
  const display = r.result.display;
  if (r.unit === resultUnit) return display;
  if (isLengthUnit(r.unit) && isLengthUnit(resultUnit)) return convertWrittenLength(display, r.unit, resultUnit) ?? display;
  if (quantityOf(r.unit) !== quantityOf(resultUnit)) return display;
  const number = /^[−-]?\d+(?:\.\d+)?/.exec(display.trim())?.[0];
  return (number && formatConvertedFigure(number, r.unit, resultUnit)) ?? display;
}

/** A reading as a sheet prints it, its figure in the unit of the clearance it belongs to. */
function sheetReading(r: PublishedReading, clearanceUnit: AnyUnit, serials: Map<number, string>): SheetReading {
  return {
    key: r.key,
    name: r.name,
    display: r.result.display,
    read: readText(r),
    figure: figureIn(r, clearanceUnit),
    instrumentId: r.instrumentId,
    instrumentName: r.instrumentName,
    instrumentSerial: serials.get(r.instrumentId) ?? '',
    takenOn: r.takenOn,
    zeroOffset: r.zeroCheck ? { offset: r.zeroCheck.offset, unit: r.zeroCheck.unit, text: zeroOffsetText(r.zeroCheck.offset, r.zeroCheck.unit) } : null,
    zeroCheckMissing: r.warnings.some((w) => w.code === 'no-zero-check'),
    checkedBy: r.checked.byName,
    checkedAt: r.checked.at,
  };
}

/**
 * The sheet of a part: every checked clearance that a current public entry of its build
 * published with a reading taken on the part, with the instruments and who checked. `storyIds`
 * narrows it to those entries. 404 when nothing public involves the part.
 */
export async function partSheet(partId: number, publicUrl: string, storyIds?: number[]): Promise<PartSheet> {
  const part = await Part.findByPk(partId);
  if (!part) throw missing();
  const build = (await Build.findByPk(part.buildId))!;
  const publications = (await currentPublications({ buildIds: [build.id], ...(storyIds && { storyIds }) })).sort(
    (a, b) => a.publishedAt.getTime() - b.publishedAt.getTime() || a.id - b.id,
  );

  const found: { p: StoryPublication; c: PublishedEvidence['clearances'][number]; readings: PublishedReading[] }[] = [];
  const used: StoryPublication[] = [];
  for (const p of publications) {
    const e = evidenceOf(p);
    const readingById = new Map(e.readings.map((r) => [r.id, r]));
    const onPart = new Set(e.readings.filter((r) => r.partId === part.id).map((r) => r.id));
    let any = false;
    for (const c of e.clearances) {
      if (!c.result || !c.checked || !c.terms.some((t) => onPart.has(t.readingId))) continue;
      any = true;
      found.push({ p, c, readings: c.terms.map((t) => readingById.get(t.readingId)).filter((r) => r !== undefined) });
    }
    if (any) used.push(p);
  }
  if (used.length === 0) throw missing();

  // Serials and calibration dates are the register's (the publication keeps the figures as judged, not these).
  const register = new Map(
    (await Instrument.findAll({ where: { id: [...new Set(found.flatMap((f) => f.readings.map((r) => r.instrumentId)))] } })).map((i) => [i.id, i]),
  );
  const serials = new Map([...register].map(([id, i]) => [id, i.serial ?? '']));

  const clearances: SheetClearance[] = [];
  const instruments = new Map<number, { id: number; name: string; calibration: CalibrationState; warnings: Map<string, { code: string; message: string }>; days: Set<string> }>();
  for (const { p, c, readings } of found) {
    for (const r of readings) {
      const known = instruments.get(r.instrumentId) ?? { id: r.instrumentId, name: r.instrumentName, calibration: 'in-date' as CalibrationState, warnings: new Map(), days: new Set<string>() };
      const state = calibrationFromWarnings(r.warnings);
      if (calibrationRank[state] > calibrationRank[known.calibration]) known.calibration = state;
      for (const w of r.warnings) if (w.code === 'calibration-overdue' || w.code === 'no-calibration-record') known.warnings.set(w.message, w);
      known.days.add(r.takenOn);
      instruments.set(r.instrumentId, known);
    }
    const result = c.result!;
    const figures = resultFigures(result);
    const isLength = figures.quantity === 'length' && isLengthUnit(result.unit);
    const none: SpecLimitTexts = { band: null, preferred: null, reject: null };
    const limits = isLength
      ? result.band && isLengthUnit(result.unit)
        ? specLimitTexts(result.band, result.unit)
        : none
      : result.bandInUnit
        ? specLimitTextsIn(result.bandInUnit, result.unit)
        : none;
    clearances.push({
      key: c.key,
      name: c.name,
      quantity: figures.quantity,
      unit: result.unit,
      valueUm: isLength ? result.valueUm : null,
      expandedUncertaintyUm: isLength ? result.expandedUncertaintyUm : null,
      value: figures.value,
      expandedUncertainty: figures.expandedUncertainty,
      coverageFactor: result.coverageFactor,
      display: result.display,
      verdict: result.verdict,
      verdictWords: result.verdict ? verdictWords[result.verdict] : 'no spec',
      preferredVerdict: result.preferredVerdict ?? null,
      rejectVerdict: result.rejectVerdict ?? null,
      rule: result.rule,
      ruleText: result.rule ? decisionRuleText[result.rule] : null,
      spec: c.spec ? { name: c.spec.name, version: c.spec.version, sourceKind: c.spec.sourceKind, sourceText: c.spec.sourceText } : null,
      band: isLength ? result.band : null,
      bandInUnit: result.bandInUnit ?? null,
      limits,
      limitFacts: result.verdict ? limitFacts({ preferredVerdict: result.preferredVerdict ?? null, rejectVerdict: result.rejectVerdict ?? null }, limits) : [],
      checkedBy: c.checked.byName,
      checkedAt: c.checked.at,
      storyId: p.storyId,
      revision: p.number,
      readings: readings.map((r) => sheetReading(r, result.unit, serials)),
    });
  }

  const people = new Map((await User.findAll({ where: { id: [build.ownerId, ...used.map((p) => p.publishedBy)] } })).map((u) => [u.id, u]));
  const owner = people.get(build.ownerId)!;
  const checkedBy = [...new Set(clearances.flatMap((c) => [c.checkedBy, ...c.readings.map((r) => r.checkedBy)]))].filter(Boolean);
  const entries = used.map((p) => ({ storyId: p.storyId, revision: p.number }));
  return {
    part: { id: part.id, name: part.name, serial: part.serial },
    build: { id: build.id, title: build.title, subject: build.subject },
    builder: builderRef(owner),
    publications: used.map((p) => ({
      storyId: p.storyId,
      revision: p.number,
      title: p.title,
      publishedAt: p.publishedAt.toISOString(),
      publishedBy: people.get(p.publishedBy)?.displayName ?? '',
    })),
    clearances,
    instruments: [...instruments.values()].map((i) => {
      const record = register.get(i.id);
      const calibratedOn = record?.lastCalibratedOn ?? null;
      return {
        id: i.id,
        name: i.name,
        serial: record?.serial ?? '',
        calibratedOn,
        calibrationDueOn: calibrationDueOn(calibratedOn, record?.calibrationIntervalDays ?? null),
        readingDays: [...i.days].sort(),
        calibration: i.calibration,
        warnings: [...i.warnings.values()] as PartSheet['instruments'][number]['warnings'],
      };
    }),
    checkedBy,
    verifyUrl: verifyUrlFor(publicUrl, part.id, entries),
    pdfUrl: `/sheets/parts/${part.id}.pdf${storyIds?.length === 1 ? `?story=${storyIds[0]}` : ''}`,
    caution: SHEET_CAUTION,
  };
}

/**
 * A printed sheet checked against the database now: for each entry printed, the revision public
 * now (null once withdrawn), and the sheet as it stands for those entries still public.
 */
export async function verifySheet(partId: number, publicUrl: string, printed: { storyIds: number[]; revisions: number[] }): Promise<VerifySheet> {
  const part = await Part.findByPk(partId);
  if (!part) throw missing();
  const stories = await Story.findAll({ where: { id: printed.storyIds, buildId: part.buildId } });
  const current = new Map((await currentPublications({ storyIds: stories.map((s) => s.id) })).map((p) => [p.storyId, p]));
  const entries = printed.storyIds.map((storyId, i) => {
    const now = current.get(storyId) ?? null;
    const printedRevision = printed.revisions[i]!;
    return { storyId, title: now?.title ?? null, printedRevision, currentRevision: now?.number ?? null, current: now !== null && now.number === printedRevision };
  });
  const stillPublic = entries.filter((e) => e.currentRevision !== null).map((e) => e.storyId);
  // Still public, yet no longer with a checked clearance on this part: nothing to show, and not current.
  const sheet = stillPublic.length
    ? await partSheet(part.id, publicUrl, stillPublic).catch((err: unknown) => {
        if (err instanceof AppError && err.status === 404) return null;
        throw err;
      })
    : null;
  return { current: sheet !== null && entries.every((e) => e.current), entries, sheet, checkedAt: new Date().toISOString() };
}
