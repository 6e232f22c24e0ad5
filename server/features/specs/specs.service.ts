import { Op, fn, col, literal, type WhereOptions } from 'sequelize';
import {
  normaliseSpecFigures,
  type LibrarySpec,
  type SpecPatch,
  type SpecVersion as SpecVersionDto,
  type specInputSchema,
  type specVersionInputSchema,
} from '@shared/specs/spec-library.schema';
import type { z } from 'zod';
import { badRequest, forbidden, notFound, unauthorized } from '../../http/errors';
import { updateWithLock } from '../../http/optimistic-lock';
import { User } from '../users/user.model';
import { Spec, SpecVersion } from './spec.model';

/** Roles that may read every spec, shared or not (to check verdicts judged against them). */
const reviewers = new Set(['moderator', 'admin']);

function mayRead(spec: Spec, user: User): boolean {
  return spec.ownerId === user.id || spec.shared || reviewers.has(user.role);
}

/**
 * Loads a spec the user may read: their own, any shared one, any for moderators and admins.
 * Others' unshared specs answer 404 like unknown ids.
 */
export async function specForViewer(specId: number, user: User | undefined): Promise<Spec> {
  if (!user) throw unauthorized();
  const spec = await Spec.findByPk(specId);
  if (!spec || !mayRead(spec, user)) throw notFound('There is no spec with that id.');
  return spec;
}

/** Loads a spec the user may change: only its owner. Someone who may read it gets 403. */
export async function specForOwner(specId: number, user: User | undefined): Promise<Spec> {
  const spec = await specForViewer(specId, user);
  if (spec.ownerId !== user!.id) throw forbidden('Only the builder who keeps this spec can change it.');
  return spec;
}

/**
 * A spec version the user may judge against: its spec is theirs or shared (moderators and
 * admins: any). Otherwise a 400 naming `specVersionId`, without saying whether the id exists.
 */
export async function specVersionUsableBy(versionId: number, user: User): Promise<SpecVersion> {
  const version = await SpecVersion.findByPk(versionId, { include: [{ model: Spec, as: 'spec', required: true }] });
  if (!version || !version.spec || !mayRead(version.spec, user)) {
    throw badRequest('No spec version you can use has that id.', [{ path: 'specVersionId', message: 'no spec version you can use has that id' }]);
  }
  return version;
}

export function toSpecVersionDto(v: SpecVersion): SpecVersionDto {
  return {
    id: v.id,
    specId: v.specId,
    version: v.version,
    unit: v.unit,
    min: v.minValue,
    max: v.maxValue,
    preferredMin: v.preferredMin,
    preferredMax: v.preferredMax,
    reject: v.rejectLimit,
    rule: v.rule,
    source: { kind: v.sourceKind, text: v.sourceText },
    note: v.note,
    createdAt: v.createdAt.toISOString(),
  };
}

/** The newest version number of each spec, in one query. */
export async function latestVersionNumbers(specIds: number[]): Promise<Map<number, number>> {
  if (specIds.length === 0) return new Map();
  const rows = (await SpecVersion.findAll({
    attributes: ['specId', [fn('max', col('version')), 'latest']],
    where: { specId: specIds },
    group: ['specId'],
    raw: true,
  })) as unknown as { specId: number; latest: number | string }[];
  return new Map(rows.map((r) => [r.specId, Number(r.latest)]));
}

/** The newest version of each spec, in one query. */
async function latestVersions(specIds: number[]): Promise<Map<number, SpecVersion>> {
  const ids = specIds.filter((id) => Number.isSafeInteger(id));
  if (ids.length === 0) return new Map();
  const rows = await SpecVersion.findAll({
    where: {
      id: {
        [Op.in]: literal(`(SELECT DISTINCT ON (spec_id) id FROM spec_versions WHERE spec_id IN (${ids.join(',')}) ORDER BY spec_id, version DESC)`),
      },
    },
  });
  return new Map(rows.map((v) => [v.specId, v]));
}

function toSpecDto(spec: Spec, latest: SpecVersion, ownerName: string, versions?: SpecVersion[]): LibrarySpec {
  return {
    id: spec.id,
    ownerId: spec.ownerId,
    ownerName,
    name: spec.name,
    appliesTo: spec.appliesTo,
    shared: spec.shared,
    latest: toSpecVersionDto(latest),
    ...(versions && { versions: versions.map(toSpecVersionDto) }),
    lockVersion: spec.lockVersion,
    createdAt: spec.createdAt.toISOString(),
    updatedAt: spec.updatedAt.toISOString(),
  };
}

/** A page of specs as the API shows them, in a fixed number of queries. */
async function toSpecDtos(specs: Spec[]): Promise<LibrarySpec[]> {
  if (specs.length === 0) return [];
  const [latest, owners] = await Promise.all([
    latestVersions(specs.map((s) => s.id)),
    User.findAll({ where: { id: [...new Set(specs.map((s) => s.ownerId))] }, attributes: ['id', 'displayName'] }),
  ]);
  const names = new Map(owners.map((u) => [u.id, u.displayName]));
  return specs.map((s) => {
    const v = latest.get(s.id);
    // Every spec is made with its first version in one transaction, and versions are never deleted.
    if (!v) throw new Error(`spec ${s.id} has no version`);
    return toSpecDto(s, v, names.get(s.ownerId) ?? '');
  });
}

/** `%`, `_` and `\` typed into the search box are searched for, not used as wildcards. */
function likePattern(q: string): string {
  return `%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

/**
 * The library as the user sees it: their own specs and every shared one (moderators and admins:
 * all), or only their own with `mine`; `q` searches name and applies-to, case-insensitively.
 * Keyset on id ascending.
 */
export async function listSpecs(user: User, q: { q?: string; mine?: '0' | '1'; after?: number; limit: number }) {
  const and: WhereOptions[] = [];
  if (q.mine === '1') and.push({ ownerId: user.id });
  else if (!reviewers.has(user.role)) and.push({ [Op.or]: [{ ownerId: user.id }, { shared: true }] });
  if (q.q) {
    const pattern = likePattern(q.q);
    and.push({ [Op.or]: [{ name: { [Op.iLike]: pattern } }, { appliesTo: { [Op.iLike]: pattern } }] });
  }
  if (q.after) and.push({ id: { [Op.gt]: q.after } });
  const rows = await Spec.findAll({ where: { [Op.and]: and }, order: [['id', 'ASC']], limit: q.limit + 1 });
  const page = rows.slice(0, q.limit);
  return { items: await toSpecDtos(page), nextAfter: rows.length > q.limit ? page[page.length - 1]!.id : null };
}

/** One spec with every version, newest first. */
export async function getSpec(spec: Spec): Promise<LibrarySpec> {
  const [versions, owner] = await Promise.all([
    SpecVersion.findAll({ where: { specId: spec.id }, order: [['version', 'DESC']] }),
    User.findByPk(spec.ownerId, { attributes: ['id', 'displayName'] }),
  ]);
  return toSpecDto(spec, versions[0]!, owner?.displayName ?? '', versions);
}

type VersionFigures = z.output<typeof specVersionInputSchema>;

/** The columns of a new version, figures as plain decimal text in its unit (the demo seed uses it too). */
export function specVersionColumns(input: VersionFigures) {
  const normal = normaliseSpecFigures(input);
  // The body schema ran the same check; this only happens if the two drift apart.
  if (!normal.ok) {
    throw badRequest('Some figures are not lengths in the spec unit.', normal.problems.map(([path, message]) => ({ path, message })));
  }
  const f = normal.figures;
  return {
    unit: f.unit,
    minValue: f.min,
    maxValue: f.max,
    preferredMin: f.preferredMin,
    preferredMax: f.preferredMax,
    rejectLimit: f.reject,
    rule: f.rule,
    sourceKind: f.source.kind,
    sourceText: f.source.text,
    note: f.note,
  };
}

/** Makes a spec and its version 1 together. */
export async function createSpec(owner: User, input: z.output<typeof specInputSchema>): Promise<LibrarySpec> {
  const columns = specVersionColumns(input);
  const spec = await Spec.sequelize!.transaction(async (transaction) => {
    const s = await Spec.create({ ownerId: owner.id, name: input.name, appliesTo: input.appliesTo, shared: input.shared }, { transaction });
    await SpecVersion.create({ specId: s.id, version: 1, createdBy: owner.id, ...columns }, { transaction });
    return s;
  });
  return getSpec(spec);
}

/** Saves name, applies-to and shared, if nobody saved since `lockVersion`. Figures change only by a new version. */
export async function updateSpec(spec: Spec, patch: SpecPatch): Promise<LibrarySpec> {
  const { lockVersion, ...fields } = patch;
  const changes = Object.fromEntries(Object.entries(fields).filter(([, v]) => v !== undefined));
  await updateWithLock(Spec, spec, lockVersion, changes, { what: 'spec' });
  await spec.reload();
  return getSpec(spec);
}

/**
 * Adds the next version. The spec row is locked for the transaction, so two builders' tabs
 * posting at once get consecutive numbers (the unique index on spec + version backs this).
 */
export async function addSpecVersion(spec: Spec, author: User, input: VersionFigures): Promise<SpecVersionDto> {
  const columns = specVersionColumns(input);
  const version = await Spec.sequelize!.transaction(async (transaction) => {
    await Spec.findByPk(spec.id, { lock: transaction.LOCK.UPDATE, transaction });
    const max = ((await SpecVersion.max('version', { where: { specId: spec.id }, transaction })) as number | null) ?? 0;
    return SpecVersion.create({ specId: spec.id, version: max + 1, createdBy: author.id, ...columns }, { transaction });
  });
  return toSpecVersionDto(version);
}
