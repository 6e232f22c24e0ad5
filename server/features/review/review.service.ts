import type { Logger } from 'pino';
import { Op, type Transaction } from 'sequelize';
import type { z } from 'zod';
import type { Clearance as ClearanceDto } from '@shared/clearances/clearance.schema';
import type { Reading as ReadingDto } from '@shared/readings/reading.schema';
import type {
  checkInputSchema,
  EvidenceCheckDto,
  PublishBlocker,
  queueItemSchema,
  TransitionInput,
} from '@shared/review/review.schema';
import { canTransition, transitions, type Actor, type StoryAction } from '@shared/review/workflow';
import { claimTargetsFrom } from '@shared/stories/claims';
import { renderStory, type RenderedClaim } from '@shared/stories/render';
import type { StoryState } from '@shared/stories/story.schema';
import type { Config } from '../../config';
import { AppError, badRequest, conflict, forbidden, notFound, unauthorized } from '../../http/errors';
import { editConflict } from '../../http/optimistic-lock';
import type { Queue } from '../../jobs/queue';
import { enqueueMail, type OutgoingMail } from '../../mail/mail.job';
import { audit } from '../audit/audit.service';
import { Build } from '../builds/build.model';
import { buildForViewer } from '../builds/builds.service';
import { Clearance } from '../clearances/clearance.model';
import { clearanceDtosForBuild } from '../clearances/clearances.service';
import { Follow } from '../follows/follow.model';
import { evidenceOf as publishedEvidenceOf } from '../public/publication';
import { changesRequestedFor } from '../stories/stories.service';
import { claimBlockers } from '@shared/review/claim-problems';
import { signUnsubscribe } from '../follows/unsubscribe-token';
import { Reading } from '../readings/reading.model';
import { readingDtosForBuild } from '../readings/readings.service';
import { Story } from '../stories/story.model';
import { User } from '../users/user.model';
import { changesRequestedMail, followerMails, publishedMail, submittedMails, withdrawnMail, type Person } from './review.emails';
import { heardWitnesses } from './heard-witness';
import { asPublished, changeSincePublished, publishedResult } from './published-change';
import { CheckAnswer, EvidenceCheck, ReviewClaim, StoryPublication } from './review.model';

/** How long a moderator's claim on a story lasts without being renewed. */
export const CLAIM_MINUTES = 30;

const reviewers = new Set(['moderator', 'admin']);

export interface ReviewDeps {
  config: Pick<Config, 'publicUrl' | 'sessionSecret'>;
  queue: Queue | null;
  logger?: Logger;
  /** The clock, injectable so claim expiry can be tested without waiting. */
  now?: () => Date;
}

// ---------------------------------------------------------------------------------------------
// What a story relies on

/** The evidence a story's body relies on, worked out from its claims and the build now. */
export interface StoryEvidence {
  readings: ReadingDto[];
  clearances: ClearanceDto[];
  claims: RenderedClaim[];
  broken: ReturnType<typeof renderStory>['broken'];
  /** Readings cited directly or through a cited clearance. */
  citedReadings: ReadingDto[];
  citedClearances: ClearanceDto[];
}

/** A build's readings and clearances as the API shows them: what a story's claims are checked against. */
async function buildEvidence(buildId: number): Promise<[ReadingDto[], ClearanceDto[]]> {
  return Promise.all([readingDtosForBuild(buildId), clearanceDtosForBuild(buildId)]);
}

export async function evidenceOf(story: Pick<Story, 'buildId' | 'body'>, loaded?: [ReadingDto[], ClearanceDto[]]): Promise<StoryEvidence> {
  const [readings, clearances] = loaded ?? (await buildEvidence(story.buildId));
  const rendered = renderStory(story.body, { targets: claimTargetsFrom(readings, clearances) });
  const byReadingKey = new Map(readings.map((r) => [r.key, r]));
  const byClearanceKey = new Map(clearances.map((c) => [c.key, c]));
  const citedClearances = new Map<number, ClearanceDto>();
  const citedReadings = new Map<number, ReadingDto>();
  for (const claim of rendered.claims) {
    if (claim.kind === 'clearance') {
      const c = byClearanceKey.get(claim.key);
      if (!c) continue;
      citedClearances.set(c.id, c);
      for (const term of c.terms) {
        const r = readings.find((x) => x.id === term.readingId);
        if (r) citedReadings.set(r.id, r);
      }
    } else {
      const r = byReadingKey.get(claim.key);
      if (r) citedReadings.set(r.id, r);
    }
  }
  return {
    readings,
    clearances,
    claims: rendered.claims,
    broken: rendered.broken,
    citedReadings: [...citedReadings.values()],
    citedClearances: [...citedClearances.values()],
  };
}

type Subject = { type: 'reading' | 'clearance'; id: number; lockVersion: number };

/**
 * The latest check of each subject, and whether it is still current (made on the version the
 * subject has now: an edited reading needs a new check, an unchanged one keeps its check).
 */
export async function latestChecks(subjects: Subject[], transaction?: Transaction): Promise<Map<string, EvidenceCheck & { current: boolean }>> {
  const out = new Map<string, EvidenceCheck & { current: boolean }>();
  if (subjects.length === 0) return out;
  const rows = await EvidenceCheck.findAll({
    where: { [Op.or]: subjects.map((s) => ({ subjectType: s.type, subjectId: s.id })) },
    order: [['id', 'DESC']],
    transaction,
  });
  for (const s of subjects) {
    const row = rows.find((r) => r.subjectType === s.type && r.subjectId === s.id);
    if (row) out.set(`${s.type}:${s.id}`, Object.assign(row, { current: row.subjectLockVersion === s.lockVersion }));
  }
  return out;
}

function subjectsOf(e: StoryEvidence): Subject[] {
  return [
    ...e.citedReadings.map((r) => ({ type: 'reading' as const, id: r.id, lockVersion: r.lockVersion })),
    ...e.citedClearances.map((c) => ({ type: 'clearance' as const, id: c.id, lockVersion: c.lockVersion })),
  ];
}

/** The evidence of a story and the latest check of each thing it relies on, read once for a decision. */
export interface Judged {
  evidence: StoryEvidence;
  checks: Awaited<ReturnType<typeof latestChecks>>;
}

async function judge(story: Pick<Story, 'buildId' | 'body'>, transaction?: Transaction): Promise<Judged> {
  const evidence = await evidenceOf(story);
  return { evidence, checks: await latestChecks(subjectsOf(evidence), transaction) };
}

/**
 * Every reason publishing would be refused now, for `moderator`, one line per problem. Empty
 * means it may be published. `judged` is passed when the caller has already read the evidence,
 * so the decision and the publication are made from the same figures.
 */
export async function publishBlockers(story: Story, build: Build, moderator: User, now: Date, judged?: Judged, transaction?: Transaction): Promise<PublishBlocker[]> {
  const blockers: PublishBlocker[] = [];
  const storySubject = { type: 'story' as const, key: null };
  if (build.ownerId === moderator.id) {
    blockers.push({ code: 'own-story', message: 'You cannot approve a story of your own build; another moderator must.', subject: storySubject });
  }
  const claim = await ReviewClaim.findByPk(story.id, { transaction });
  if (!claim || claim.moderatorId !== moderator.id || claim.expiresAt <= now) {
    blockers.push({ code: 'no-claim-held', message: 'Take the story for review first, so no one else is checking it at the same time.', subject: storySubject });
  }
  const { evidence: e, checks } = judged ?? (await judge(story, transaction));
  if (e.claims.length === 0 && e.broken.length === 0) {
    blockers.push({ code: 'no-claims', message: 'The story makes no claims linked to readings or clearances, so there is nothing to check.', subject: storySubject });
  }
  blockers.push(...claimBlockers(e));
  const judgeOne = (type: 'reading' | 'clearance', id: number, key: string, name: string) => {
    const check = checks.get(`${type}:${id}`);
    if (!check) {
      blockers.push({ code: 'unchecked', message: `The ${type} "${name}" (${key}) has not been checked against the footage.`, subject: { type, key } });
    } else if (!check.current) {
      // The check was of what the builder had entered then; what is there now has not been looked at.
      blockers.push({ code: 'changed-since-checked', message: `The ${type} "${name}" (${key}) has changed since it was ${check.state}; check it again.`, subject: { type, key } });
    } else if (check.state === 'flagged') {
      blockers.push({ code: 'flagged', message: `The ${type} "${name}" (${key}) is flagged: ${check.comment}`, subject: { type, key } });
    }
  };
  for (const r of e.citedReadings) judgeOne('reading', r.id, r.key, r.name);
  for (const c of e.citedClearances) {
    judgeOne('clearance', c.id, c.key, c.name);
    if (c.spec && c.spec.sourceText.trim().length === 0) {
      blockers.push({ code: 'spec-without-source', message: `The spec of "${c.name}" cites no source.`, subject: { type: 'clearance', key: c.key } });
    }
  }
  return blockers;
}

/**
 * Whether a published revision is shown to the public now. A withdrawal stands until it is
 * lifted (republish) or a new revision passes review, even while a new revision is in review.
 */
export function isPublicNow(story: Pick<Story, 'publishedPublicationId' | 'withdrawnBy' | 'state'>): boolean {
  return story.publishedPublicationId !== null && story.withdrawnBy === null && story.state !== 'withdrawn';
}

// ---------------------------------------------------------------------------------------------
// Loading

/** A story for a reviewer or its builder, with its build; 404 to everyone else. */
export async function storyForReview(storyId: number, user: User | undefined, transaction?: Transaction): Promise<{ story: Story; build: Build }> {
  if (!user) throw unauthorized();
  const story = await Story.findByPk(storyId, { transaction, ...(transaction && { lock: transaction.LOCK.UPDATE }) });
  if (!story) throw notFound('There is no story with that id.');
  const build = await buildForViewer(story.buildId, user).catch((err) => {
    throw err instanceof AppError && err.status === 404 ? notFound('There is no story with that id.') : err;
  });
  return { story, build };
}

/**
 * Who the user is for this action. A moderator who is also the builder acts as the builder where
 * builders may act, and as a moderator elsewhere, so that approving their own story is refused by
 * the publish gate (own-story) rather than passing for a builder's move.
 */
function actorFor(user: User, build: Build, action: StoryAction): Actor | null {
  const owns = build.ownerId === user.id;
  const reviews = reviewers.has(user.role);
  const builderMay = transitions.find((t) => t.action === action)?.by.includes('builder') ?? false;
  if (owns && (builderMay || !reviews)) return 'builder';
  if (reviews) return 'moderator';
  return null;
}

async function personsOf(ids: number[]): Promise<Map<number, User>> {
  const unique = [...new Set(ids)];
  return new Map((unique.length ? await User.findAll({ where: { id: unique } }) : []).map((u) => [u.id, u]));
}

const person = (u: User): Person => ({ id: u.id, displayName: u.displayName, email: u.email });

// ---------------------------------------------------------------------------------------------
// Claims on stories in review

/** Takes (or renews) a story for review; refused while another moderator's claim is live. */
export async function claimStory(storyId: number, moderator: User, deps: ReviewDeps) {
  const now = deps.now?.() ?? new Date();
  return Story.sequelize!.transaction(async (transaction) => {
    const { story, build } = await storyForReview(storyId, moderator, transaction);
    if (build.ownerId === moderator.id) throw forbidden('You cannot review a story of your own build.');
    if (story.state !== 'in-review') throw conflict('Only a story in review can be taken for review.', 'story_not_in_review');
    const existing = await ReviewClaim.findByPk(story.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (existing && existing.moderatorId !== moderator.id && existing.expiresAt > now) {
      const holder = await User.findByPk(existing.moderatorId, { transaction });
      throw conflict(
        `${holder?.displayName ?? 'Another moderator'} is checking this story until ${existing.expiresAt.toISOString().slice(11, 16)} UTC.`,
        'claimed_by_other',
      );
    }
    const expiresAt = new Date(now.getTime() + CLAIM_MINUTES * 60_000);
    if (existing) await existing.update({ moderatorId: moderator.id, claimedAt: now, expiresAt }, { transaction });
    else await ReviewClaim.create({ storyId: story.id, moderatorId: moderator.id, claimedAt: now, expiresAt }, { transaction });
    await audit(
      {
        actorId: moderator.id,
        action: 'review.claim',
        subjectType: 'story',
        subjectId: story.id,
        storyId: story.id,
        before: existing ? { moderatorId: existing.moderatorId, expiresAt: existing.expiresAt.toISOString() } : null,
        after: { moderatorId: moderator.id, expiresAt: expiresAt.toISOString() },
      },
      transaction,
    );
    return { storyId: story.id, moderatorId: moderator.id, moderatorName: moderator.displayName, expiresAt: expiresAt.toISOString() };
  });
}

/** Lets go of a claim (only its holder, or an admin). */
export async function releaseClaim(storyId: number, moderator: User) {
  await Story.sequelize!.transaction(async (transaction) => {
    const { story } = await storyForReview(storyId, moderator, transaction);
    const existing = await ReviewClaim.findByPk(story.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!existing) return;
    if (existing.moderatorId !== moderator.id && moderator.role !== 'admin') throw forbidden('Only the moderator holding the story can let it go.');
    await existing.destroy({ transaction });
    await audit(
      {
        actorId: moderator.id,
        action: 'review.release',
        subjectType: 'story',
        subjectId: story.id,
        storyId: story.id,
        before: { moderatorId: existing.moderatorId, expiresAt: existing.expiresAt.toISOString() },
        after: null,
      },
      transaction,
    );
  });
}

async function assertClaimHeld(story: Story, moderator: User, now: Date, transaction: Transaction) {
  const claim = await ReviewClaim.findByPk(story.id, { transaction });
  if (!claim || claim.moderatorId !== moderator.id || claim.expiresAt <= now) {
    throw conflict('Take the story for review first (or again: your hold lapsed), so no one else is checking it at the same time.', 'claim_not_held');
  }
}

// ---------------------------------------------------------------------------------------------
// Checks, flags, answers

type CheckInput = z.output<typeof checkInputSchema>;

/** Records a moderator's check or flag of one reading or clearance the story relies on. */
export async function recordCheck(moderator: User, input: CheckInput, deps: ReviewDeps): Promise<EvidenceCheckDto> {
  const now = deps.now?.() ?? new Date();
  const id = await Story.sequelize!.transaction(async (transaction) => {
    const { story, build } = await storyForReview(input.storyId, moderator, transaction);
    if (build.ownerId === moderator.id) throw forbidden('You cannot check the readings of your own build.');
    if (story.state !== 'in-review') throw conflict('Readings are checked while the story is in review.', 'story_not_in_review');
    await assertClaimHeld(story, moderator, now, transaction);
    const e = await evidenceOf(story);
    const subject =
      input.subjectType === 'reading' ? e.citedReadings.find((r) => r.id === input.subjectId) : e.citedClearances.find((c) => c.id === input.subjectId);
    if (!subject) {
      throw badRequest(`That ${input.subjectType} is not one this story relies on.`, [{ path: 'subjectId', message: `not a ${input.subjectType} the story cites` }]);
    }
    const check = await EvidenceCheck.create(
      {
        storyId: story.id,
        subjectType: input.subjectType,
        subjectId: subject.id,
        subjectLockVersion: subject.lockVersion,
        state: input.state,
        comment: input.comment,
        moderatorId: moderator.id,
      },
      { transaction },
    );
    // Only the version judged: if the builder saved a change meanwhile, that one stays unchecked.
    const model = input.subjectType === 'reading' ? Reading : Clearance;
    await (model as typeof Reading).update({ reviewState: input.state }, { where: { id: subject.id, lockVersion: subject.lockVersion }, transaction, silent: true });
    await audit(
      {
        actorId: moderator.id,
        action: input.state === 'checked' ? 'check.checked' : 'check.flagged',
        subjectType: input.subjectType,
        subjectId: subject.id,
        storyId: story.id,
        before: { reviewState: subject.reviewState, lockVersion: subject.lockVersion },
        after: { reviewState: input.state, lockVersion: subject.lockVersion, checkId: check.id, comment: input.comment },
      },
      transaction,
    );
    return check.id;
  });
  return (await checkDtos({ where: { id } }))[0]!;
}

/** The builder answers a flag; the answer is kept with it. */
export async function answerCheck(builder: User, checkId: number, body: string): Promise<EvidenceCheckDto> {
  await Story.sequelize!.transaction(async (transaction) => {
    const check = await EvidenceCheck.findByPk(checkId, { transaction });
    if (!check) throw notFound('There is no check with that id.');
    const { build } = await storyForReview(check.storyId, builder, transaction).catch((err) => {
      throw err instanceof AppError && err.status === 404 ? notFound('There is no check with that id.') : err;
    });
    if (build.ownerId !== builder.id) throw forbidden('Only the builder answers flags on their readings.');
    if (check.state !== 'flagged') throw conflict('Only a flag can be answered.', 'not_a_flag');
    const answer = await CheckAnswer.create({ checkId: check.id, body, authorId: builder.id }, { transaction });
    await audit(
      {
        actorId: builder.id,
        action: 'check.answered',
        subjectType: check.subjectType,
        subjectId: check.subjectId,
        storyId: check.storyId,
        before: { checkId: check.id, state: check.state, comment: check.comment },
        after: { checkId: check.id, answerId: answer.id, body },
      },
      transaction,
    );
  });
  return (await checkDtos({ where: { id: checkId } }))[0]!;
}

/** Checks of a story (or by any filter), newest first, with their answers and whether each is current. */
export async function checkDtos(q: { where: Record<string, unknown> }): Promise<EvidenceCheckDto[]> {
  const rows = await EvidenceCheck.findAll({ where: q.where, order: [['id', 'DESC']], include: [{ model: CheckAnswer, as: 'answers' }] });
  if (rows.length === 0) return [];
  const readingIds = rows.filter((r) => r.subjectType === 'reading').map((r) => r.subjectId);
  const clearanceIds = rows.filter((r) => r.subjectType === 'clearance').map((r) => r.subjectId);
  const [readings, clearances] = await Promise.all([
    readingIds.length ? Reading.findAll({ where: { id: readingIds }, attributes: ['id', 'key', 'name', 'lockVersion'] }) : [],
    clearanceIds.length ? Clearance.findAll({ where: { id: clearanceIds }, attributes: ['id', 'key', 'name', 'lockVersion'] }) : [],
  ]);
  const subjects = new Map<string, { key: string; name: string; lockVersion: number }>([
    ...readings.map((r) => [`reading:${r.id}`, r] as const),
    ...clearances.map((c) => [`clearance:${c.id}`, c] as const),
  ]);
  const answers = rows.flatMap((r) => (r as EvidenceCheck & { answers?: CheckAnswer[] }).answers ?? []);
  const people = await personsOf([...rows.map((r) => r.moderatorId), ...answers.map((a) => a.authorId)]);
  return rows.map((r) => {
    const s = subjects.get(`${r.subjectType}:${r.subjectId}`);
    const own = ((r as EvidenceCheck & { answers?: CheckAnswer[] }).answers ?? []).sort((a, b) => a.id - b.id);
    return {
      id: r.id,
      storyId: r.storyId,
      subjectType: r.subjectType,
      subjectId: r.subjectId,
      subjectKey: s?.key ?? '',
      subjectName: s?.name ?? '(removed)',
      subjectLockVersion: r.subjectLockVersion,
      current: s?.lockVersion === r.subjectLockVersion,
      state: r.state,
      comment: r.comment,
      moderatorId: r.moderatorId,
      moderatorName: people.get(r.moderatorId)?.displayName ?? '',
      createdAt: r.createdAt.toISOString(),
      answers: own.map((a) => ({ id: a.id, body: a.body, authorId: a.authorId, authorName: people.get(a.authorId)?.displayName ?? '', createdAt: a.createdAt.toISOString() })),
    };
  });
}

/**
 * The flags that stand on a build's readings and clearances, for its builder's workspace: per
 * story back with its builder or in review, the latest check of each subject when it is a flag,
 * with its comment, answers and the story's id and title. Newest first.
 */
export async function standingFlagsOfBuild(buildId: number): Promise<(EvidenceCheckDto & { storyTitle: string })[]> {
  const stories = await Story.findAll({ where: { buildId, state: ['in-review', 'changes-requested'] }, attributes: ['id', 'title'] });
  if (stories.length === 0) return [];
  const titles = new Map(stories.map((s) => [s.id, s.title]));
  const latest = new Map<string, EvidenceCheckDto>();
  // Newest first: the first seen of a subject in a story is its latest check there.
  for (const c of await checkDtos({ where: { storyId: stories.map((s) => s.id) } })) {
    const key = `${c.storyId}:${c.subjectType}:${c.subjectId}`;
    if (!latest.has(key)) latest.set(key, c);
  }
  return [...latest.values()].filter((c) => c.state === 'flagged').map((c) => ({ ...c, storyTitle: titles.get(c.storyId) ?? '' }));
}

// ---------------------------------------------------------------------------------------------
// Transitions

/**
 * Moves a story through the workflow (shared/review/workflow.ts), server side: role, state,
 * reason, the claim for moderator actions, the publish gate, the audit line, and the mail
 * (queued in the same transaction, so it is queued exactly when the move commits; sending is the
 * worker's, so a slow mail server never fails the move).
 */
export async function transition(storyId: number, user: User, input: TransitionInput, deps: ReviewDeps) {
  const now = deps.now?.() ?? new Date();
  const mails: OutgoingMail[] = [];
  // Read before the transaction: the evidence takes several queries of its own, and a
  // transaction waiting on them could hold the last pooled connection they need.
  const submitProblems = input.action === 'submit' ? claimBlockers(await evidenceOf((await storyForReview(storyId, user)).story)) : [];
  const result = await Story.sequelize!.transaction(async (transaction) => {
    const { story, build } = await storyForReview(storyId, user, transaction);
    const actor = actorFor(user, build, input.action);
    if (!actor) throw forbidden('Only the builder or a moderator can do that.');
    if (story.lockVersion !== input.lockVersion) throw editConflict('story', story);
    // Republishing shows a withdrawn revision again; every other move asks whether one is public now.
    const hasPublicRevision = input.action === 'republish' ? story.publishedPublicationId !== null : isPublicNow(story);
    const verdict = canTransition(input.action, story.state, actor, { hasPublicRevision, reason: input.reason });
    if (!verdict.ok) {
      if (verdict.code === 'reason_required') throw badRequest(verdict.message, [{ path: 'reason', message: verdict.message }], 'reason_required');
      throw new AppError(verdict.code === 'not_your_role' ? 403 : 409, verdict.code === 'not_your_role' ? 'forbidden' : verdict.code, verdict.message);
    }
    const before = { state: story.state, publishedPublicationId: story.publishedPublicationId, withdrawnBy: story.withdrawnBy };
    const owner = (await User.findByPk(build.ownerId, { transaction }))!;
    const ref = { id: story.id, title: story.title, buildTitle: build.title, builderName: owner.displayName };
    const reason = input.reason?.trim() ?? '';
    const changes: Partial<
      Pick<Story, 'state' | 'submittedAt' | 'publishedPublicationId' | 'withdrawnReason' | 'withdrawnBy' | 'changesRequestedReason' | 'changesRequestedBy' | 'changesRequestedAt'>
    > = { state: verdict.to };
    let publication: StoryPublication | null = null;

    switch (input.action) {
      case 'submit': {
        // A story whose text contradicts its own evidence goes back to its builder, not to a moderator.
        const problems = submitProblems;
        if (problems.length) {
          throw new AppError(
            409,
            'submit_blocked',
            `This story cannot be sent for review yet: ${problems.length} claim${problems.length === 1 ? '' : 's'} to correct.`,
            problems.map((b) => ({ path: b.code, message: b.message })),
          );
        }
        changes.submittedAt = now;
        changes.changesRequestedReason = null;
        changes.changesRequestedBy = null;
        changes.changesRequestedAt = null;
        // A new submission is a new review: whoever held the last one lets go.
        await ReviewClaim.destroy({ where: { storyId: story.id }, transaction });
        const moderators = await User.findAll({ where: { role: 'moderator', id: { [Op.ne]: owner.id } }, transaction });
        mails.push(...submittedMails(deps.config.publicUrl, ref, moderators.map(person)));
        break;
      }
      case 'request-changes': {
        if (build.ownerId === user.id) throw forbidden('You cannot review a story of your own build.');
        await assertClaimHeld(story, user, now, transaction);
        const { evidence, checks } = await judge(story, transaction);
        const names = new Map<string, string>([
          ...evidence.citedReadings.map((r) => [`reading:${r.id}`, r.name] as const),
          ...evidence.citedClearances.map((c) => [`clearance:${c.id}`, c.name] as const),
        ]);
        // The flags that stand now: a later check of the same version replaces an earlier flag.
        const flags = [...checks.entries()].filter(([, c]) => c.current && c.state === 'flagged').map(([k, c]) => `${names.get(k) ?? k}: ${c.comment}`);
        mails.push(...changesRequestedMail(deps.config.publicUrl, ref, person(owner), reason, flags));
        changes.changesRequestedReason = reason;
        changes.changesRequestedBy = user.id;
        changes.changesRequestedAt = now;
        await ReviewClaim.destroy({ where: { storyId: story.id }, transaction });
        break;
      }
      case 'publish': {
        const judged = await judge(story, transaction);
        const blockers = await publishBlockers(story, build, user, now, judged, transaction);
        if (blockers.length) {
          throw new AppError(
            409,
            'publish_blocked',
            `This story cannot be published yet: ${blockers.length} problem${blockers.length === 1 ? '' : 's'} to resolve.`,
            blockers.map((b) => ({ path: b.code, message: b.message })),
          );
        }
        publication = await publish(story, build, user, judged, transaction);
        changes.publishedPublicationId = publication.id;
        changes.withdrawnReason = null;
        changes.withdrawnBy = null;
        await ReviewClaim.destroy({ where: { storyId: story.id }, transaction });
        mails.push(...publishedMail(deps.config.publicUrl, ref, person(owner), publication.number));
        mails.push(...(await followerMailsFor(deps, { ...ref, summary: story.summary, revision: publication.number }, owner.id, transaction)));
        break;
      }
      case 'withdraw': {
        changes.withdrawnReason = reason;
        changes.withdrawnBy = user.id;
        await ReviewClaim.destroy({ where: { storyId: story.id }, transaction });
        mails.push(...withdrawnMail(deps.config.publicUrl, ref, person(owner), reason, actor === 'moderator'));
        break;
      }
      case 'republish': {
        // A moderator's withdrawal stands until a moderator lifts it (or a new review passes).
        if (actor === 'builder' && story.withdrawnBy !== null && story.withdrawnBy !== user.id) {
          throw new AppError(403, 'withdrawn_by_moderator', 'A moderator withdrew this story; only a moderator can show it again. Send it for review instead.');
        }
        changes.withdrawnReason = null;
        changes.withdrawnBy = null;
        break;
      }
    }
    await Story.update(changes, { where: { id: story.id }, transaction, silent: true });
    await audit(
      {
        actorId: user.id,
        action: `story.${input.action}`,
        subjectType: 'story',
        subjectId: story.id,
        storyId: story.id,
        before,
        after: {
          state: verdict.to,
          publishedPublicationId: changes.publishedPublicationId ?? story.publishedPublicationId,
          withdrawnBy: changes.withdrawnBy !== undefined ? changes.withdrawnBy : story.withdrawnBy,
          ...(publication && { revision: publication.number }),
        },
        note: reason,
      },
      transaction,
    );
    await enqueueMail(deps.queue, mails, deps.logger, { transaction });
    return { storyId: story.id, state: verdict.to as StoryState, revision: publication?.number ?? null };
  });
  return result;
}

async function followerMailsFor(deps: ReviewDeps, story: Parameters<typeof followerMails>[1], builderId: number, transaction: Transaction) {
  const follows = await Follow.findAll({ where: { builderId, emailOnPublish: true }, transaction });
  const people = await personsOf(follows.map((f) => f.followerId));
  return followerMails(
    deps.config.publicUrl,
    story,
    follows
      .map((f) => people.get(f.followerId))
      .filter((u): u is User => Boolean(u))
      .map((u) => ({ ...person(u), unsubscribeToken: signUnsubscribe(deps.config.sessionSecret, u.id, builderId) })),
  );
}

/**
 * Writes the public revision: the story's text and, for every claim, what it was judged on: the
 * reading's or clearance's version and figures, the spec version, and who checked it and when.
 */
async function publish(story: Story, build: Build, moderator: User, judged: Judged, transaction: Transaction): Promise<StoryPublication> {
  const { evidence: e, checks } = judged;
  const people = await personsOf([...checks.values()].map((c) => c.moderatorId));
  const checked = (type: 'reading' | 'clearance', id: number) => {
    // The gate has just passed, so every cited subject has a current check.
    const c = checks.get(`${type}:${id}`)!;
    return { checkId: c.id, by: c.moderatorId, byName: people.get(c.moderatorId)?.displayName ?? '', at: c.createdAt.toISOString(), lockVersion: c.subjectLockVersion };
  };
  const readingByKey = new Map(e.citedReadings.map((r) => [r.key, r]));
  const clearanceByKey = new Map(e.citedClearances.map((c) => [c.key, c]));
  // What was heard near each reading's moment when it was published, so readers see the witness as judged.
  const heard = await heardWitnesses(e.citedReadings);
  const last = (await StoryPublication.max('number', { where: { storyId: story.id }, transaction })) as number | null;
  return StoryPublication.create(
    {
      storyId: story.id,
      number: (last ?? 0) + 1,
      title: story.title,
      summary: story.summary,
      coverMomentId: story.coverMomentId,
      tags: story.tags,
      workDate: story.workDate,
      body: story.body,
      evidence: {
        buildId: build.id,
        storyLockVersion: story.lockVersion,
        claims: e.claims.map((c) => {
          const subject = c.kind === 'reading' ? readingByKey.get(c.key) : clearanceByKey.get(c.key);
          const clearance = c.kind === 'clearance' ? clearanceByKey.get(c.key) : undefined;
          return {
            kind: c.kind,
            key: c.key,
            text: c.text,
            line: c.line,
            status: c.status.state,
            display: c.target?.display ?? null,
            verdict: c.target?.verdict ?? null,
            subjectId: subject?.id ?? null,
            lockVersion: subject?.lockVersion ?? null,
            specVersionId: clearance?.specVersionId ?? null,
            specVersion: clearance?.spec?.version ?? null,
            checked: subject ? checked(c.kind, subject.id) : null,
          };
        }),
        readings: e.citedReadings.map((r) => ({ ...r, checked: checked('reading', r.id), heard: heard.get(r.id) })),
        clearances: e.citedClearances.map((c) => ({ ...c, checked: checked('clearance', c.id) })),
      },
      publishedBy: moderator.id,
    },
    { transaction },
  );
}

// ---------------------------------------------------------------------------------------------
// The queue and the review sheet

type QueueItem = z.infer<typeof queueItemSchema>;

/** Stories in review, oldest sent first, keyset on (submittedAt, id). */
export async function reviewQueue(q: { after?: string; limit: number }, now: Date): Promise<{ items: QueueItem[]; nextAfter: string | null }> {
  const [afterAt, afterId] = q.after ? [new Date(q.after.split('_')[0]!), Number(q.after.split('_')[1])] : [null, null];
  const rows = await Story.findAll({
    where: {
      state: 'in-review',
      ...(afterAt && {
        [Op.or]: [{ submittedAt: { [Op.gt]: afterAt } }, { submittedAt: afterAt, id: { [Op.gt]: afterId } }],
      }),
    },
    order: [['submittedAt', 'ASC'], ['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const builds = new Map((page.length ? await Build.findAll({ where: { id: page.map((s) => s.buildId) } }) : []).map((b) => [b.id, b]));
  const claims = new Map((page.length ? await ReviewClaim.findAll({ where: { storyId: page.map((s) => s.id) } }) : []).map((c) => [c.storyId, c]));
  const people = await personsOf([...[...builds.values()].map((b) => b.ownerId), ...[...claims.values()].map((c) => c.moderatorId)]);
  const items: QueueItem[] = [];
  // Each build's readings and clearances are loaded once for the page, and every check in one query.
  const perBuild = new Map<number, Promise<[ReadingDto[], ClearanceDto[]]>>();
  for (const s of page) if (!perBuild.has(s.buildId)) perBuild.set(s.buildId, buildEvidence(s.buildId));
  const evidence = await Promise.all(page.map(async (s) => evidenceOf(s, await perBuild.get(s.buildId)!)));
  const checks = await latestChecks(evidence.flatMap(subjectsOf));
  for (const [i, s] of page.entries()) {
    const build = builds.get(s.buildId)!;
    const e = evidence[i]!;
    const left = subjectsOf(e).filter((x) => {
      const c = checks.get(`${x.type}:${x.id}`);
      return !c || !c.current || c.state === 'flagged';
    }).length;
    const claim = claims.get(s.id);
    const live = claim && claim.expiresAt > now ? claim : null;
    items.push({
      storyId: s.id,
      title: s.title,
      state: s.state,
      buildId: build.id,
      buildTitle: build.title,
      builderId: build.ownerId,
      builderName: people.get(build.ownerId)?.displayName ?? '',
      submittedAt: (s.submittedAt ?? s.updatedAt).toISOString(),
      readings: e.citedReadings.length,
      clearances: e.citedClearances.length,
      leftToCheck: left,
      // Claims can change after sending (a reading edited in the workspace): the card says so.
      claimProblems: claimBlockers(e).map((b) => b.message),
      claim: live ? { moderatorId: live.moderatorId, moderatorName: people.get(live.moderatorId)?.displayName ?? '', expiresAt: live.expiresAt.toISOString() } : null,
      republication: s.publishedPublicationId !== null,
    });
  }
  const lastRow = page[page.length - 1];
  return { items, nextAfter: rows.length > q.limit && lastRow ? `${(lastRow.submittedAt ?? lastRow.updatedAt).toISOString()}_${lastRow.id}` : null };
}

/**
 * Everything a moderator needs to check a story, reading by reading: each cited reading with
 * its instrument state and moment, the clearances that use it, the sentences that cite it, and
 * its current check; the blockers to publishing; the claim; the checks with answers.
 */
export async function reviewSheet(storyId: number, user: User, deps: ReviewDeps) {
  const now = deps.now?.() ?? new Date();
  const { story, build } = await storyForReview(storyId, user);
  const e = await evidenceOf(story);
  const checks = await latestChecks(subjectsOf(e));
  const checkOf = (type: 'reading' | 'clearance', id: number) => {
    const c = checks.get(`${type}:${id}`);
    return c ? { checkId: c.id, state: c.state, current: c.current, comment: c.comment } : null;
  };
  const sentences = (kind: 'reading' | 'clearance', key: string) =>
    e.claims.filter((c) => c.kind === kind && c.key === key).map((c) => ({ text: c.text, line: c.line, status: c.status }));
  const claim = await ReviewClaim.findByPk(story.id);
  const holder = claim ? await User.findByPk(claim.moderatorId) : null;
  const isModerator = reviewers.has(user.role) && build.ownerId !== user.id;
  const compare = await comparePublished(story, e);
  const heard = await heardWitnesses(e.citedReadings);
  return {
    story: {
      id: story.id,
      title: story.title,
      state: story.state,
      lockVersion: story.lockVersion,
      buildId: build.id,
      buildTitle: build.title,
      builderId: build.ownerId,
      body: story.body,
      submittedAt: story.submittedAt?.toISOString() ?? null,
      hasPublicRevision: isPublicNow(story),
      publishedPublicationId: story.publishedPublicationId,
      changesRequested: await changesRequestedFor(story),
    },
    claim: claim && claim.expiresAt > now ? { moderatorId: claim.moderatorId, moderatorName: holder?.displayName ?? '', expiresAt: claim.expiresAt.toISOString() } : null,
    readings: e.citedReadings.map((r) => ({
      reading: r,
      usedBy: e.citedClearances.filter((c) => c.terms.some((t) => t.readingId === r.id)).map((c) => ({ id: c.id, key: c.key, name: c.name, display: c.result?.display ?? null })),
      citedIn: sentences('reading', r.key),
      check: checkOf('reading', r.id),
      heard: heard.get(r.id),
    })),
    clearances: e.citedClearances.map((c) => ({
      clearance: c,
      citedIn: sentences('clearance', c.key),
      check: checkOf('clearance', c.id),
      ...(compare ? compare(c) : { asPublished: null, change: null }),
    })),
    claims: e.claims.map((c) => ({ kind: c.kind, key: c.key, text: c.text, line: c.line, status: c.status })),
    broken: e.broken,
    // The gate is judged on the evidence and checks already read for the sheet.
    blockers: isModerator ? await publishBlockers(story, build, user, now, { evidence: e, checks }) : [],
    checks: await checkDtos({ where: { storyId: story.id } }),
  };
}

/**
 * For a story with a current publication (a republication in review, or a published one), a
 * function that sets each cited clearance beside the same clearance (by id) as that publication
 * judged it: `asPublished` and, when the verdict or the figures differ, `change` in words. Null
 * when the story has never been published.
 */
async function comparePublished(story: Story, e: StoryEvidence) {
  if (story.publishedPublicationId === null) return null;
  const publication = await StoryPublication.findByPk(story.publishedPublicationId);
  if (!publication) return null;
  const published = publishedEvidenceOf(publication);
  const clearancesThen = new Map(published.clearances.map((c) => [c.id, c]));
  const readingLockThen = new Map(published.readings.map((r) => [r.id, r.lockVersion]));
  const readingLockNow = new Map(e.readings.map((r) => [r.id, r.lockVersion]));
  return (c: ClearanceDto) => {
    const then = clearancesThen.get(c.id);
    const result = publishedResult(then);
    if (!then || !result) return { asPublished: null, change: null };
    const edited = then.lockVersion !== c.lockVersion || c.terms.some((t) => readingLockThen.get(t.readingId) !== readingLockNow.get(t.readingId));
    return {
      asPublished: asPublished(result, publication.number),
      change: changeSincePublished(c, result, publication.number, { edited, specVersionThen: then.spec?.version ?? null }),
    };
  };
}
