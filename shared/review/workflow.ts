/**
 * The publishing workflow of a story, as one table of transitions: who may move a story from
 * which state to which. The server enforces it (shared/review is imported by the service) and
 * the browser uses it only to decide which buttons to show.
 */
import type { StoryState } from '../stories/story.schema';

/** Actions on a story's workflow. */
export const storyActions = ['submit', 'request-changes', 'publish', 'withdraw', 'republish'] as const;
/** One action on a story's workflow. */
export type StoryAction = (typeof storyActions)[number];

/** Who is acting, relative to the story. */
export type Actor = 'builder' | 'moderator';

/** One allowed move. */
export interface Transition {
  readonly action: StoryAction;
  readonly from: readonly StoryState[];
  readonly to: StoryState;
  readonly by: readonly Actor[];
  /** A reason must be given (and is kept in the audit log). */
  readonly needsReason: boolean;
  /** Words for a button. */
  readonly label: string;
}

/**
 * Every allowed transition. Anything not here is refused. A published story keeps its public
 * revision while a newer one is in review or has changes requested; withdrawing hides it.
 */
export const transitions: readonly Transition[] = [
  { action: 'submit', from: ['draft', 'changes-requested', 'published', 'withdrawn'], to: 'in-review', by: ['builder'], needsReason: false, label: 'Send for review' },
  { action: 'request-changes', from: ['in-review'], to: 'changes-requested', by: ['moderator'], needsReason: true, label: 'Ask for changes' },
  { action: 'publish', from: ['in-review'], to: 'published', by: ['moderator'], needsReason: false, label: 'Publish' },
  { action: 'withdraw', from: ['published', 'in-review', 'changes-requested'], to: 'withdrawn', by: ['builder', 'moderator'], needsReason: true, label: 'Withdraw' },
  { action: 'republish', from: ['withdrawn'], to: 'published', by: ['builder', 'moderator'], needsReason: false, label: 'Republish' },
];

/** Why a move is not allowed, in words a person can act on. */
export type TransitionRefusal = { ok: false; code: 'not_allowed_from_state' | 'not_your_role' | 'reason_required' | 'nothing_public'; message: string };

/**
 * Whether `actor` may take `action` on a story in `state`. `hasPublicRevision` matters for
 * withdraw (from in review or changes requested, only when an earlier revision is public) and
 * republish (only when there is a revision to show again).
 */
export function canTransition(
  action: StoryAction,
  state: StoryState,
  actor: Actor,
  opts: { hasPublicRevision: boolean; reason?: string },
): { ok: true; to: StoryState } | TransitionRefusal {
  const t = transitions.find((x) => x.action === action);
  if (!t) return { ok: false, code: 'not_allowed_from_state', message: `There is no action "${action}".` };
  if (!t.from.includes(state)) {
    return { ok: false, code: 'not_allowed_from_state', message: `A story that is ${stateWord(state)} cannot be ${pastTense[action]}.` };
  }
  if (!t.by.includes(actor)) {
    return { ok: false, code: 'not_your_role', message: `Only ${t.by.map((a) => (a === 'builder' ? 'its builder' : 'a moderator')).join(' or ')} can do that.` };
  }
  if ((action === 'withdraw' && state !== 'published') || action === 'republish') {
    if (!opts.hasPublicRevision) {
      return { ok: false, code: 'nothing_public', message: action === 'withdraw' ? 'Nothing of this story is public, so there is nothing to withdraw.' : 'This story has never been published, so send it for review instead.' };
    }
  }
  if (t.needsReason && !(opts.reason && opts.reason.trim().length >= 3)) {
    return { ok: false, code: 'reason_required', message: 'Give a reason (at least 3 characters); it is kept in the record.' };
  }
  return { ok: true, to: t.to };
}

const pastTense: Record<StoryAction, string> = {
  submit: 'sent for review',
  'request-changes': 'sent back for changes',
  publish: 'published',
  withdraw: 'withdrawn',
  republish: 'republished',
};

function stateWord(state: StoryState): string {
  return { draft: 'a draft', 'in-review': 'in review', 'changes-requested': 'waiting for changes', published: 'published', withdrawn: 'withdrawn' }[state];
}

/** The actions an actor may see as buttons for a story in `state`. */
export function actionsFor(state: StoryState, actor: Actor, hasPublicRevision: boolean): StoryAction[] {
  return storyActions.filter((a) => {
    const r = canTransition(a, state, actor, { hasPublicRevision, reason: 'xxx' });
    return r.ok;
  });
}
