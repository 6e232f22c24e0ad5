import { engineInstrumentsMap } from '@shared/measure/instrument-map';
import { Op, type Transaction } from 'sequelize';
import type { z } from 'zod';
import { computeClearance } from '@shared/clearances/clearance-calc';
import { compileFormula } from '@shared/measure/formula';
import { dimensionOf, quantityDimensions, quantityOf } from '@shared/measure/quantities';
import type { Clearance as ClearanceDto, ClearancePatch, clearanceInputSchema, clearanceListQuerySchema } from '@shared/clearances/clearance.schema';
import { AppError, badRequest, notFound } from '../../http/errors';
import { editConflict, updateWithLock } from '../../http/optimistic-lock';
import { Build } from '../builds/build.model';
import { buildForOwner, buildForViewer, type OwnerAction } from '../builds/builds.service';
import { Reading } from '../readings/reading.model';
import { allocateKey, storiesCiting, toReadingDtos } from '../readings/readings.service';
import { Spec, SpecVersion } from '../specs/spec.model';
import { latestVersionNumbers, specVersionUsableBy, toSpecVersionDto } from '../specs/specs.service';
import type { User } from '../users/user.model';
import { Clearance, ClearanceTerm } from './clearance.model';

export type { ClearanceDto };
type ClearanceInput = z.output<typeof clearanceInputSchema>;
type ClearanceListQuery = z.output<typeof clearanceListQuerySchema>;

/**
 * API shapes for clearances, each worked out now from its stored readings. A page costs a fixed
 * number of queries: terms, readings (and what they need), spec versions, newest versions.
 */
async function toDtos(rows: Clearance[], transaction?: Transaction): Promise<ClearanceDto[]> {
  if (rows.length === 0) return [];
  const ids = rows.map((c) => c.id);
  const terms = await ClearanceTerm.findAll({ where: { clearanceId: ids }, order: [['clearanceId', 'ASC'], ['position', 'ASC']], transaction });
  const readingIds = [...new Set(terms.map((t) => t.readingId))];
  const versionIds = [...new Set(rows.map((c) => c.specVersionId).filter((id): id is number => id !== null))];
  const [readingRows, versions] = await Promise.all([
    readingIds.length ? Reading.findAll({ where: { id: readingIds }, transaction }) : [],
    versionIds.length ? SpecVersion.findAll({ where: { id: versionIds }, include: [{ model: Spec, as: 'spec' }], transaction }) : [],
  ]);
  const [readings, latest] = await Promise.all([
    toReadingDtos(readingRows, transaction),
    latestVersionNumbers([...new Set(versions.map((v) => v.specId))]),
  ]);
  const readingById = new Map(readings.map((r) => [r.id, r]));
  const versionById = new Map(versions.map((v) => [v.id, v]));
  const termsOf = new Map<number, ClearanceTerm[]>();
  for (const t of terms) termsOf.set(t.clearanceId, [...(termsOf.get(t.clearanceId) ?? []), t]);

  return rows.map((c) => {
    const own = termsOf.get(c.id) ?? [];
    const version = c.specVersionId === null ? null : (versionById.get(c.specVersionId) ?? null);
    const coverageFactor = c.coverageFactor === null ? null : Number(c.coverageFactor);
    const termReadings = own.map((t) => ({ term: t, reading: readingById.get(t.readingId)! }));
    const computed = computeClearance({
      // In a formula each reading goes by the name the formula uses (kept when its key changes).
      terms: termReadings.map(({ term, reading }) => ({ key: c.formula !== null ? (term.symbol ?? reading.key) : reading.key, engine: reading.engine, sign: term.sign })),
      spec: version ? toSpecVersionDto(version) : null,
      coverageFactor,
      formula: c.formula === null ? null : { text: c.formula, constants: c.constants ?? {} },
      resultUnit: c.resultUnit,
      // Readings taken with one instrument share its calibration: a difference cancels it.
      instruments: engineInstrumentsMap(termReadings.map(({ reading }) => reading.engineInstrument)),
    });
    const newest = version ? latest.get(version.specId) : undefined;
    return {
      id: c.id,
      buildId: c.buildId,
      key: c.key,
      name: c.name,
      template: c.template,
      terms: termReadings.map(({ term, reading }) => ({ readingId: reading.id, readingKey: reading.key, readingName: reading.name, sign: term.sign, symbol: term.symbol ?? null })),
      formula: c.formula,
      constants: c.constants ?? {},
      resultUnit: c.resultUnit,
      specVersionId: c.specVersionId,
      spec: version
        ? {
            specId: version.specId,
            name: version.spec?.name ?? '',
            version: version.version,
            sourceKind: version.sourceKind,
            sourceText: version.sourceText,
            newerVersion: newest !== undefined && newest > version.version ? newest : null,
          }
        : null,
      coverageFactor,
      note: c.note,
      reviewState: c.reviewState,
      result: computed.ok ? computed.result : null,
      problems: computed.ok ? [] : computed.problems,
      lockVersion: c.lockVersion,
      createdAt: c.createdAt.toISOString(),
      updatedAt: c.updatedAt.toISOString(),
    };
  });
}

/** Every clearance of a build as the API shows it, oldest first (for stories). */
export async function clearanceDtosForBuild(buildId: number): Promise<ClearanceDto[]> {
  return toDtos(await Clearance.findAll({ where: { buildId }, order: [['id', 'ASC']] }));
}

/** A page of a build's clearances by keyset on id ascending. */
export async function listClearances(buildId: number, q: ClearanceListQuery): Promise<{ items: ClearanceDto[]; nextAfter: number | null }> {
  const rows = await Clearance.findAll({
    where: { buildId, ...(q.after !== undefined && { id: { [Op.gt]: q.after } }) },
    order: [['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  return { items: await toDtos(page), nextAfter: rows.length > q.limit ? page[page.length - 1]!.id : null };
}

export async function getClearance(clearance: Clearance): Promise<ClearanceDto> {
  return (await toDtos([clearance]))[0]!;
}

/** A clearance the user may see (as for its build); 404 for everything else. */
export async function clearanceForViewer(clearanceId: number, user: User | undefined): Promise<{ clearance: Clearance; build: Build }> {
  const clearance = await Clearance.findByPk(clearanceId);
  if (!clearance) throw notFound('There is no clearance with that id.');
  const build = await buildForViewer(clearance.buildId, user).catch((err) => {
    throw err instanceof AppError && err.status === 404 ? notFound('There is no clearance with that id.') : err;
  });
  return { clearance, build };
}

/** A clearance the user may change: the build's builder (an admin too, to take it down). */
export async function clearanceForOwner(clearanceId: number, user: User | undefined, action: OwnerAction = 'change') {
  const { clearance } = await clearanceForViewer(clearanceId, user);
  const build = await buildForOwner(clearance.buildId, user, action);
  return { clearance, build };
}

/** Every term's reading must be a reading of this build; refusals name terms.N.readingId. */
async function checkTerms(buildId: number, terms: { readingId: number }[], transaction?: Transaction): Promise<Reading[]> {
  const found = await Reading.findAll({ attributes: ['id', 'unit', 'key'], where: { id: terms.map((t) => t.readingId), buildId }, transaction });
  const have = new Set(found.map((r) => r.id));
  const missing = terms.flatMap((t, i) => (have.has(t.readingId) ? [] : [i]));
  const problems = missing.map((i) => ({ path: `terms.${i}.readingId`, message: 'not a reading of this build: pick one of its readings' }));
  if (problems.length) {
    throw badRequest(`Pick readings of this build: term ${missing.map((i) => i + 1).join(', ')} ${missing.length === 1 ? 'is' : 'are'} not one of them.`, problems, 'invalid_request');
  }
  return found;
}

/**
 * A formula must read: its names are the terms' symbols and the constants, its dimensions fit
 * (a length plus a volume is refused), and the unit chosen for the result is of its quantity.
 * Refusals name `formula` or `resultUnit`, in the engine's words.
 */
function checkFormula(
  formula: string,
  terms: { readingId: number; symbol?: string | undefined }[],
  constants: Record<string, { unit: Parameters<typeof dimensionOf>[0] }>,
  resultUnit: Parameters<typeof dimensionOf>[0] | null,
  readings: Reading[],
) {
  const unitOf = new Map(readings.map((r) => [r.id, r.unit]));
  const inputs = [
    ...terms.map((t) => ({ name: t.symbol ?? '', dimension: dimensionOf(unitOf.get(t.readingId)!) })),
    ...Object.entries(constants).map(([name, c]) => ({ name, dimension: dimensionOf(c.unit) })),
  ];
  const compiled = compileFormula(formula, inputs);
  if (!compiled.ok) {
    const message = compiled.problems.map((p) => p.message).join('; ');
    throw badRequest(`The formula cannot be worked out: ${message}`, compiled.problems.map((p) => ({ path: 'formula', message: p.message })), 'invalid_request');
  }
  if (resultUnit !== null) {
    const want = compiled.formula.dimension;
    const have = quantityDimensions[quantityOf(resultUnit)];
    if (want.some((d, i) => d !== have[i])) {
      throw badRequest('The result unit is of another quantity than the formula gives.', [{ path: 'resultUnit', message: `the formula does not give a ${quantityOf(resultUnit)}: choose a unit of what it gives, or none` }], 'invalid_request');
    }
  }
}

function termRows(clearanceId: number, terms: { readingId: number; sign: 1 | -1; symbol?: string | undefined }[], formula: boolean) {
  return terms.map((t, position) => ({ clearanceId, readingId: t.readingId, sign: formula ? (1 as const) : t.sign, position, symbol: formula ? (t.symbol ?? null) : null }));
}

/** Makes a clearance from readings of the build; 201's body. */
export async function createClearance(build: Build, user: User, input: ClearanceInput): Promise<ClearanceDto> {
  const readings = await checkTerms(build.id, input.terms);
  if (input.formula !== null) checkFormula(input.formula, input.terms, input.constants, input.resultUnit, readings);
  if (input.specVersionId !== null) await specVersionUsableBy(input.specVersionId, user);
  const clearance = await Clearance.sequelize!.transaction(async (transaction) => {
    await Build.findByPk(build.id, { transaction, lock: transaction.LOCK.UPDATE });
    const key = await allocateKey(Clearance, build.id, { key: input.key, name: input.name }, transaction, 'clearance');
    const c = await Clearance.create(
      {
        buildId: build.id,
        key,
        name: input.name,
        template: input.template,
        specVersionId: input.specVersionId,
        coverageFactor: input.coverageFactor === null ? null : String(input.coverageFactor),
        formula: input.formula,
        constants: input.formula === null ? {} : input.constants,
        resultUnit: input.resultUnit,
        note: input.note,
        createdBy: user.id,
      },
      { transaction },
    );
    await ClearanceTerm.bulkCreate(termRows(c.id, input.terms, input.formula !== null), { transaction });
    return c;
  });
  return getClearance(clearance);
}

/**
 * Saves an edit made from `lockVersion` (409 `edit_conflict` when stale, nothing stored). Terms
 * sent replace the terms as a whole. A change to what the figures rest on (terms, spec, k)
 * sends a checked clearance back to unchecked.
 */
export async function patchClearance(clearance: Clearance, build: Build, user: User, patch: ClearancePatch): Promise<ClearanceDto> {
  if (patch.lockVersion !== clearance.lockVersion) throw editConflict('clearance', clearance);
  const changes: Record<string, unknown> = {};
  const formula = patch.formula !== undefined ? patch.formula : clearance.formula;
  const constants = patch.constants ?? clearance.constants ?? {};
  const resultUnit = patch.resultUnit !== undefined ? patch.resultUnit : clearance.resultUnit;
  const before = await ClearanceTerm.findAll({ where: { clearanceId: clearance.id }, order: [['position', 'ASC']] });
  const terms = patch.terms ?? before.map((t) => ({ readingId: t.readingId, sign: t.sign, symbol: t.symbol ?? undefined }));
  const readings = await checkTerms(build.id, terms);
  if (formula !== null && formula !== undefined) {
    const unnamed = terms.findIndex((t) => t.symbol === undefined);
    if (unnamed >= 0) throw badRequest('Name each reading as the formula uses it.', [{ path: `terms.${unnamed}.symbol`, message: 'name this reading as the formula uses it' }], 'invalid_request');
    checkFormula(formula, terms, constants, resultUnit ?? null, readings);
  }
  for (const [field, value, stored] of [
    ['formula', formula ?? null, clearance.formula],
    ['resultUnit', resultUnit ?? null, clearance.resultUnit],
  ] as const) {
    if (value !== stored) changes[field] = value;
  }
  if (JSON.stringify(formula === null ? {} : constants) !== JSON.stringify(clearance.constants ?? {})) changes.constants = formula === null ? {} : constants;
  if (patch.specVersionId !== undefined && patch.specVersionId !== clearance.specVersionId) {
    if (patch.specVersionId !== null) await specVersionUsableBy(patch.specVersionId, user);
    changes.specVersionId = patch.specVersionId;
  }
  const storedK = clearance.coverageFactor === null ? null : Number(clearance.coverageFactor);
  if (patch.coverageFactor !== undefined && patch.coverageFactor !== storedK) changes.coverageFactor = patch.coverageFactor === null ? null : String(patch.coverageFactor);
  for (const field of ['name', 'note', 'template'] as const) {
    if (patch[field] !== undefined && patch[field] !== clearance[field]) changes[field] = patch[field];
  }
  if (patch.key !== undefined && patch.key !== clearance.key) changes.key = patch.key;

  await Clearance.sequelize!.transaction(async (transaction) => {
    if (changes.key !== undefined) {
      await Build.findByPk(build.id, { transaction, lock: transaction.LOCK.UPDATE });
      const citing = await storiesCiting(build.id, 'clearance', clearance.key, transaction);
      if (citing.length) throw citedRefusal(clearance.key, citing, 'change its key');
      await allocateKey(Clearance, build.id, { key: changes.key as string, name: clearance.name }, transaction, 'clearance');
    }
    const isFormula = formula !== null && formula !== undefined;
    const rows = termRows(clearance.id, terms, isFormula);
    const termsChanged =
      JSON.stringify(before.map((t) => [t.readingId, t.sign, t.symbol ?? null])) !== JSON.stringify(rows.map((t) => [t.readingId, t.sign, t.symbol]));
    const modelChanged = changes.formula !== undefined || changes.constants !== undefined || changes.resultUnit !== undefined;
    if (clearance.reviewState !== 'unchecked' && (termsChanged || modelChanged || changes.specVersionId !== undefined || changes.coverageFactor !== undefined)) {
      changes.reviewState = 'unchecked';
    }
    // The lock first: a stale save must not touch the terms either.
    await updateWithLock(Clearance, clearance, patch.lockVersion, changes, { what: 'clearance', transaction });
    if (termsChanged) {
      await ClearanceTerm.destroy({ where: { clearanceId: clearance.id }, transaction });
      await ClearanceTerm.bulkCreate(rows, { transaction });
    }
  });
  await clearance.reload();
  return getClearance(clearance);
}

function citedRefusal(key: string, stories: { id: number; title: string }[], doing: string): AppError {
  const titles = stories.map((s) => `"${s.title}"`).join(', ');
  return new AppError(
    409,
    'clearance_cited',
    `${stories.length === 1 ? 'The story' : 'The stories'} ${titles} cite${stories.length === 1 ? 's' : ''} this clearance as (clearance:${key}). Take the claim out of the story first, then ${doing}.`,
    stories.map((s) => ({ path: 'key', message: `cited by story ${s.id}` })),
  );
}

/** Removes a clearance (its terms go with it), refused while a story cites it (409 `clearance_cited`). */
export async function deleteClearance(clearance: Clearance): Promise<void> {
  const citing = await storiesCiting(clearance.buildId, 'clearance', clearance.key);
  if (citing.length) throw citedRefusal(clearance.key, citing, 'remove the clearance');
  await clearance.destroy();
}
