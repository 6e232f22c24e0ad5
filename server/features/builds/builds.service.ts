import { Op } from 'sequelize';
import type { Build as BuildDto, BuildPatch, ListBuildsResponse } from '@shared/builds/build.schema';
import { buildInputSchema } from '@shared/builds/build.schema';
import { AppError, badRequest, forbidden, notFound, unauthorized } from '../../http/errors';
import { Clip } from '../clips/clip.model';
import { Reading } from '../readings/reading.model';
import type { User } from '../users/user.model';
import { Build, Part } from './build.model';

/** Roles that may look at any build's drafts (to check them). */
const reviewers = new Set(['moderator', 'admin']);

/**
 * API shapes for builds. A list passes what it already loaded (owner, clip counts) so a page
 * of builds costs a fixed number of queries, not a few per build.
 */
async function toDtos(builds: Build[], known: { owner?: User } = {}): Promise<BuildDto[]> {
  if (builds.length === 0) return [];
  const ids = builds.map((b) => b.id);
  const counts = (await Clip.count({ where: { buildId: ids }, group: ['buildId'] })) as unknown as { buildId: number; count: number }[];
  const clipCounts = new Map(counts.map((c) => [c.buildId, Number(c.count)]));
  const missingParts = builds.filter((b) => !b.parts).map((b) => b.id);
  const parts = missingParts.length ? await Part.findAll({ where: { buildId: missingParts } }) : [];
  const ownerIds = [...new Set(builds.map((b) => b.ownerId))].filter((id) => id !== known.owner?.id);
  const owners = new Map<number, User>(known.owner ? [[known.owner.id, known.owner]] : []);
  if (ownerIds.length) {
    for (const u of (await Build.sequelize!.models.User!.findAll({ where: { id: ownerIds } })) as User[]) owners.set(u.id, u);
  }
  return builds.map((build) => toDto(build, build.parts ?? parts.filter((p) => p.buildId === build.id), clipCounts.get(build.id) ?? 0, owners.get(build.ownerId)));
}

function toDto(build: Build, parts: Part[], clipCount: number, owner: User | undefined): BuildDto {
  return {
    id: build.id,
    ownerId: build.ownerId,
    ownerName: owner?.displayName ?? '',
    title: build.title,
    subject: build.subject,
    parts: [...parts].sort((a, b) => a.position - b.position).map((p) => ({ id: p.id, name: p.name, serial: p.serial })),
    clipCount,
    createdAt: build.createdAt.toISOString(),
    updatedAt: build.updatedAt.toISOString(),
  };
}

async function oneDto(build: Build): Promise<BuildDto> {
  return (await toDtos([build]))[0]!;
}

/**
 * Loads a build the user may see: its builder, moderators and admins. (Published builds become
 * public with the stories feature.) Unknown and not-yours both answer 404 to non-reviewers, so
 * ids of other builders' drafts are not confirmed.
 */
export async function buildForViewer(buildId: number, user: User | undefined): Promise<Build> {
  if (!user) throw unauthorized();
  const build = await Build.findByPk(buildId);
  if (!build || (build.ownerId !== user.id && !reviewers.has(user.role))) throw notFound('There is no build with that id.');
  return build;
}

/** Who besides the builder may act: nobody writes in a builder's name; an admin may take content down. */
export type OwnerAction = 'change' | 'take-down';

/**
 * Loads a build the user may act on. Only its builder may change or add to it (a build's
 * figures are the builder's own); an admin may also remove things (`take-down`).
 */
export async function buildForOwner(buildId: number, user: User | undefined, action: OwnerAction = 'change'): Promise<Build> {
  const build = await buildForViewer(buildId, user);
  const admin = user!.role === 'admin' && action === 'take-down';
  if (build.ownerId !== user!.id && !admin) throw forbidden('Only the builder of this build can change it.');
  return build;
}

export async function createBuild(owner: User, input: unknown): Promise<BuildDto> {
  const data = buildInputSchema.parse(input);
  const build = await Build.sequelize!.transaction(async (transaction) => {
    const b = await Build.create({ ownerId: owner.id, title: data.title, subject: data.subject }, { transaction });
    await Part.bulkCreate(
      data.parts.map((p, position) => ({ buildId: b.id, name: p.name, serial: p.serial, position })),
      { transaction },
    );
    return b;
  });
  return oneDto(build);
}

export async function updateBuild(build: Build, patch: BuildPatch): Promise<BuildDto> {
  await Build.sequelize!.transaction(async (transaction) => {
    build.set({ ...(patch.title !== undefined && { title: patch.title }), ...(patch.subject !== undefined && { subject: patch.subject }) });
    build.changed('updatedAt', true);
    await build.save({ transaction });
    if (patch.parts) {
      // The list is edited as a whole, but a part sent with its id keeps that id.
      const existing = new Map((await Part.findAll({ where: { buildId: build.id }, transaction })).map((p) => [p.id, p]));
      const kept = new Set<number>();
      for (const [position, p] of patch.parts.entries()) {
        const current = p.id === undefined ? undefined : existing.get(p.id);
        if (p.id !== undefined && !current) {
          throw badRequest('A part in the list does not belong to this build.', [{ path: `parts.${position}.id`, message: 'not a part of this build' }]);
        }
        if (current) {
          kept.add(current.id);
          await current.update({ name: p.name, serial: p.serial ?? '', position }, { transaction });
        } else {
          await Part.create({ buildId: build.id, name: p.name, serial: p.serial ?? '', position }, { transaction });
        }
      }
      const gone = [...existing.keys()].filter((id) => !kept.has(id));
      if (gone.length) {
        // A reading names the part it was taken on; removing the part would orphan that record.
        const used = await Reading.findAll({ attributes: ['partId'], where: { partId: gone }, group: ['partId'], transaction });
        if (used.length) {
          const names = used.map((r) => existing.get(r.partId!)!).map((p) => `"${p.name}"${p.serial ? ` (${p.serial})` : ''}`);
          throw new AppError(
            409,
            'part_in_use',
            `Readings are logged against ${names.join(', ')}, so ${used.length === 1 ? 'it' : 'they'} cannot be removed. Keep ${used.length === 1 ? 'it' : 'them'} in the list, or move those readings to another part first.`,
            used.map((r) => ({ path: 'parts', message: `${existing.get(r.partId!)!.name} (part ${r.partId}) has readings` })),
          );
        }
        await Part.destroy({ where: { id: gone }, transaction });
      }
    }
  });
  build.parts = undefined;
  return oneDto(build);
}

export async function getBuild(build: Build): Promise<BuildDto> {
  return oneDto(build);
}

/** The user's own builds, newest first, by keyset on id. */
export async function listOwnBuilds(owner: User, q: { before?: number; limit: number }): Promise<ListBuildsResponse> {
  const rows = await Build.findAll({
    where: { ownerId: owner.id, ...(q.before ? { id: { [Op.lt]: q.before } } : {}) },
    order: [['id', 'DESC']],
    limit: q.limit + 1,
    include: [{ model: Part, as: 'parts' }],
  });
  const page = rows.slice(0, q.limit);
  return {
    items: await toDtos(page, { owner }),
    nextBefore: rows.length > q.limit ? page[page.length - 1]!.id : null,
  };
}
