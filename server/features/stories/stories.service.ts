import { ForeignKeyConstraintError, Op, type Transaction } from 'sequelize';
import {
  countWords,
  storyInputSchema,
  type Story as StoryDto,
  type StoryPatch,
  type StoryRevision as StoryRevisionDto,
  type StoryTags,
} from '@shared/stories/story.schema';
import { checkClaim, claimTargetKey, claimTargetsFrom, findClaims, type BrokenClaim, type ClaimRef, type ClaimStatus, type ClaimTarget } from '@shared/stories/claims';
import { AppError, badRequest, conflict, notFound, unauthorized } from '../../http/errors';
import { updateWithLock } from '../../http/optimistic-lock';
import type { Build } from '../builds/build.model';
import { buildForOwner, buildForViewer } from '../builds/builds.service';
import { Clip, Moment } from '../clips/clip.model';
import { momentDto } from '../clips/clips.service';
import { clearanceDtosForBuild } from '../clearances/clearances.service';
import { readingDtosForBuild } from '../readings/readings.service';
import { User } from '../users/user.model';
import type { Storage } from '../../storage/storage';
import { Story, StoryImage, StoryRevision } from './story.model';

/**
 * An autosave revision is written after a saved change when the newest revision is at least
 * this old (or there is none), so history grows at a steady pace while someone types.
 */
export const AUTOSAVE_EVERY_MS = 5 * 60 * 1000;

/** True when a change saved at `now` should also be kept as an autosave revision. */
export function autosaveDue(newestAt: Date | null, now: Date, everyMs = AUTOSAVE_EVERY_MS): boolean {
  return newestAt === null || now.getTime() - newestAt.getTime() >= everyMs;
}

const NO_STORY = 'There is no story with that id.';

/** A story the user may read (the builder of its build, moderators, admins); 404 for anyone else. */
export async function storyForViewer(storyId: number, user: User | undefined): Promise<{ story: Story; build: Build }> {
  if (!user) throw unauthorized();
  const story = await Story.findByPk(storyId);
  if (!story) throw notFound(NO_STORY);
  const build = await buildForViewer(story.buildId, user).catch((err: unknown) => {
    throw err instanceof AppError && err.status === 404 ? notFound(NO_STORY) : err;
  });
  return { story, build };
}

/** A story the user may change: only the builder of its build (reviewers read, 403). */
export async function storyForOwner(storyId: number, user: User | undefined): Promise<{ story: Story; build: Build }> {
  const { story, build } = await storyForViewer(storyId, user);
  await buildForOwner(build.id, user);
  return { story, build };
}

/** Cover stills of the given moments, by moment id. */
async function coverUrls(momentIds: (number | null)[]): Promise<Map<number, string>> {
  const ids = [...new Set(momentIds.filter((id): id is number => id !== null))];
  if (ids.length === 0) return new Map();
  const moments = await Moment.findAll({ where: { id: ids } });
  return new Map(moments.map((m) => [m.id, momentDto(m).frameUrl]));
}

/** Display names of the moderators who sent the given stories back, by user id. */
async function requesterNames(stories: Story[]): Promise<Map<number, string>> {
  const ids = [...new Set(stories.map((s) => s.changesRequestedBy).filter((id): id is number => id != null))];
  if (ids.length === 0) return new Map();
  const people = await User.findAll({ where: { id: ids }, attributes: ['id', 'displayName'] });
  return new Map(people.map((p) => [p.id, p.displayName]));
}

/** The moderator's request for changes on one story, with the moderator's name looked up. */
export async function changesRequestedFor(story: Story): Promise<StoryDto['changesRequested']> {
  return changesRequestedOf(story, await requesterNames([story]));
}

/** The moderator's request for changes while the story is back with its builder, else null. */
export function changesRequestedOf(story: Story, names: Map<number, string>): StoryDto['changesRequested'] {
  if (story.state !== 'changes-requested' || story.changesRequestedReason == null) return null;
  return {
    reason: story.changesRequestedReason,
    moderatorName: (story.changesRequestedBy != null && names.get(story.changesRequestedBy)) || 'A moderator',
    at: (story.changesRequestedAt ?? story.updatedAt).toISOString(),
  };
}

function toDto(story: Story, build: Build, covers: Map<number, string>, names: Map<number, string>): StoryDto {
  return {
    id: story.id,
    buildId: story.buildId,
    buildTitle: build.title,
    title: story.title,
    summary: story.summary,
    workDate: story.workDate ?? null,
    tags: story.tags,
    coverMomentId: story.coverMomentId ?? null,
    coverUrl: story.coverMomentId == null ? null : (covers.get(story.coverMomentId) ?? null),
    body: story.body,
    state: story.state,
    hasPublicRevision: story.publishedPublicationId !== null,
    wordCount: countWords(story.body),
    changesRequested: changesRequestedOf(story, names),
    lockVersion: story.lockVersion,
    updatedBy: story.updatedBy,
    createdAt: story.createdAt.toISOString(),
    updatedAt: story.updatedAt.toISOString(),
  };
}

async function oneDto(story: Story, build: Build): Promise<StoryDto> {
  return toDto(story, build, await coverUrls([story.coverMomentId ?? null]), await requesterNames([story]));
}

/** Refuses a cover that is not a moment on a clip of this build (400 naming the field). */
async function assertCoverOfBuild(momentId: number | null | undefined, buildId: number, transaction?: Transaction) {
  if (momentId == null) return;
  const moment = await Moment.findByPk(momentId, { include: [{ model: Clip, as: 'clip', attributes: ['buildId'] }], transaction });
  const clip = (moment as (Moment & { clip?: Clip }) | null)?.clip;
  if (!clip || clip.buildId !== buildId) {
    throw badRequest('The cover must be a moment marked on one of this build’s clips.', [
      { path: 'coverMomentId', message: 'not a moment of this build' },
    ]);
  }
}

/** The build's stories, newest first, by keyset on id (bodies left out; their word counts kept). */
export async function listStories(build: Build, q: { before?: number; limit: number }) {
  const rows = await Story.findAll({
    where: { buildId: build.id, ...(q.before ? { id: { [Op.lt]: q.before } } : {}) },
    order: [['id', 'DESC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const covers = await coverUrls(page.map((s) => s.coverMomentId ?? null));
  const names = await requesterNames(page);
  return {
    items: page.map((s) => {
      const { body: _body, ...rest } = toDto(s, build, covers, names);
      return rest;
    }),
    nextBefore: rows.length > q.limit ? page[page.length - 1]!.id : null,
  };
}

export async function getStory(story: Story, build: Build): Promise<StoryDto> {
  return oneDto(story, build);
}

export async function createStory(build: Build, user: User, input: unknown): Promise<StoryDto> {
  const data = storyInputSchema.parse(input);
  await assertCoverOfBuild(data.coverMomentId, build.id);
  const story = await Story.create({
    buildId: build.id,
    title: data.title,
    summary: data.summary,
    workDate: data.workDate,
    tags: data.tags,
    coverMomentId: data.coverMomentId,
    body: data.body,
    createdBy: user.id,
    updatedBy: user.id,
  });
  return oneDto(story, build);
}

const editableFields = ['title', 'summary', 'workDate', 'tags', 'coverMomentId', 'body'] as const;

type RevisionState = Pick<Story, 'title' | 'summary' | 'workDate' | 'tags' | 'coverMomentId' | 'body'>;

async function addRevision(story: Story & RevisionState, reason: 'autosave' | 'kept', user: User, transaction: Transaction) {
  const last = (await StoryRevision.max('number', { where: { storyId: story.id }, transaction })) as number | null;
  return StoryRevision.create(
    {
      storyId: story.id,
      number: (last ?? 0) + 1,
      title: story.title,
      summary: story.summary,
      workDate: story.workDate ?? null,
      tags: story.tags as StoryTags,
      coverMomentId: story.coverMomentId ?? null,
      body: story.body,
      reason,
      savedBy: user.id,
    },
    { transaction },
  );
}

/**
 * Saves the editor's change made from `patch.lockVersion`. A stale version is refused with 409
 * `edit_conflict` and nothing is stored. After a saved change an autosave revision is written
 * when the newest one is `autosaveEveryMs` old or more (see `autosaveDue`).
 */
export async function patchStory(
  story: Story,
  build: Build,
  user: User,
  patch: StoryPatch,
  opts: { autosaveEveryMs?: number } = {},
): Promise<StoryDto> {
  const changes: Record<string, unknown> = {};
  for (const field of editableFields) if (patch[field] !== undefined) changes[field] = patch[field];
  if (changes.coverMomentId !== undefined) await assertCoverOfBuild(patch.coverMomentId, build.id);
  await Story.sequelize!.transaction(async (transaction) => {
    // The conditional UPDATE also locks the row until commit, so revision numbers are taken one at a time.
    await updateWithLock(Story, story, patch.lockVersion, { ...changes, updatedBy: user.id }, { what: 'story', transaction });
    await story.reload({ transaction });
    const newest = await StoryRevision.findOne({ where: { storyId: story.id }, order: [['number', 'DESC']], transaction });
    if (autosaveDue(newest?.createdAt ?? null, new Date(), opts.autosaveEveryMs)) await addRevision(story, 'autosave', user, transaction);
  });
  return oneDto(story, build);
}

/** The storage prefix of one image (`stories/<uuid>`), which holds only that image. */
export function imagePrefix(storageKey: string): string {
  return storageKey.slice(0, storageKey.lastIndexOf('/'));
}

/**
 * Deletes a draft with its revisions and images. The rows go in one transaction; the image
 * files are deleted after it commits, so a failed delete never leaves rows pointing at nothing.
 */
export async function deleteStory(storage: Storage, story: Story): Promise<void> {
  if (story.state !== 'draft') {
    throw conflict('Only a draft can be deleted; this story has been sent for review or published.', 'story_not_draft');
  }
  const keys = await Story.sequelize!.transaction(async (transaction) => {
    const locked = await Story.findByPk(story.id, { transaction, lock: transaction.LOCK.UPDATE });
    // Checked again under the lock: it may have been sent for review since it was loaded.
    if (!locked || locked.state !== 'draft') {
      throw conflict('Only a draft can be deleted; this story has been sent for review or published.', 'story_not_draft');
    }
    const images = await StoryImage.findAll({ where: { storyId: story.id }, attributes: ['id', 'storageKey'], transaction });
    await StoryImage.destroy({ where: { storyId: story.id }, transaction });
    await StoryRevision.destroy({ where: { storyId: story.id }, transaction });
    await locked.destroy({ transaction });
    return images.map((i) => i.storageKey);
  }).catch((err: unknown) => {
    // Moderators' checks and publications are kept for good (they are the record of a review).
    if (err instanceof ForeignKeyConstraintError) {
      throw conflict('This draft has been reviewed before, and a review’s record is kept; it cannot be deleted.', 'story_not_draft');
    }
    throw err;
  });
  for (const key of keys) await storage.deletePrefix(imagePrefix(key));
}

function revisionDto(r: StoryRevision & { saver?: User }): StoryRevisionDto {
  return {
    number: r.number,
    reason: r.reason,
    title: r.title,
    summary: r.summary,
    workDate: r.workDate ?? null,
    tags: r.tags,
    coverMomentId: r.coverMomentId ?? null,
    body: r.body,
    savedBy: r.savedBy,
    savedByName: r.saver?.displayName ?? '',
    createdAt: r.createdAt.toISOString(),
  };
}

/** The story's revisions, newest first, by keyset on the revision number (bodies left out). */
export async function listRevisions(story: Story, q: { before?: number; limit: number }) {
  const rows = (await StoryRevision.findAll({
    where: { storyId: story.id, ...(q.before ? { number: { [Op.lt]: q.before } } : {}) },
    order: [['number', 'DESC']],
    limit: q.limit + 1,
    include: [{ model: User, as: 'saver', attributes: ['id', 'displayName'] }],
  })) as (StoryRevision & { saver?: User })[];
  const page = rows.slice(0, q.limit);
  return {
    items: page.map((r) => {
      const { body: _body, ...rest } = revisionDto(r);
      return rest;
    }),
    nextBefore: rows.length > q.limit ? page[page.length - 1]!.number : null,
  };
}

export async function getRevision(story: Story, number: number): Promise<StoryRevisionDto> {
  const row = (await StoryRevision.findOne({
    where: { storyId: story.id, number },
    include: [{ model: User, as: 'saver', attributes: ['id', 'displayName'] }],
  })) as (StoryRevision & { saver?: User }) | null;
  if (!row) throw notFound('This story has no revision with that number.');
  return revisionDto(row);
}

/** Keeps the story as it is now as a 'kept' revision (numbered under a lock on the story row). */
export async function keepRevision(story: Story, user: User): Promise<StoryRevisionDto> {
  const revision = await Story.sequelize!.transaction(async (transaction) => {
    const locked = await Story.findByPk(story.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!locked) throw notFound(NO_STORY);
    return addRevision(locked, 'kept', user, transaction);
  });
  return revisionDto(Object.assign(revision, { saver: user }));
}

/** A claim of a stored body as the claims endpoint lists it. */
export interface StoredClaim extends ClaimRef {
  status: ClaimStatus;
  target: ClaimTarget | null;
}

/** The claims of the stored body checked against the build's readings and clearances as they are now. */
export async function storyClaims(story: Story): Promise<{ claims: StoredClaim[]; broken: BrokenClaim[] }> {
  const [readings, clearances] = await Promise.all([readingDtosForBuild(story.buildId), clearanceDtosForBuild(story.buildId)]);
  const targets = claimTargetsFrom(readings, clearances);
  const { claims, broken } = findClaims(story.body);
  return {
    claims: claims.map((claim) => ({
      ...claim,
      status: checkClaim(claim, targets),
      target: targets.get(claimTargetKey(claim.kind, claim.key)) ?? null,
    })),
    broken,
  };
}
