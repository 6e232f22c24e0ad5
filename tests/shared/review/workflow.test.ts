import { describe, expect, it } from 'vitest';
import { actionsFor, canTransition, storyActions, type Actor, type StoryAction } from '../../../shared/review/workflow';
import { storyStates, type StoryState } from '../../../shared/stories/story.schema';

/*
 * Every (action, state, actor) cell of the workflow, written out by hand as the product's rule,
 * so a change to the transition table shows up here as a changed expectation.
 */
type Cell = StoryState | '—';
// prettier-ignore
const EXPECTED: Record<StoryAction, Record<Actor, Record<StoryState, Cell>>> = {
  submit: {
    builder:   { draft: 'in-review', 'in-review': '—', 'changes-requested': 'in-review', published: 'in-review', withdrawn: 'in-review' },
    moderator: { draft: '—', 'in-review': '—', 'changes-requested': '—', published: '—', withdrawn: '—' },
  },
  'request-changes': {
    builder:   { draft: '—', 'in-review': '—', 'changes-requested': '—', published: '—', withdrawn: '—' },
    moderator: { draft: '—', 'in-review': 'changes-requested', 'changes-requested': '—', published: '—', withdrawn: '—' },
  },
  publish: {
    builder:   { draft: '—', 'in-review': '—', 'changes-requested': '—', published: '—', withdrawn: '—' },
    moderator: { draft: '—', 'in-review': 'published', 'changes-requested': '—', published: '—', withdrawn: '—' },
  },
  withdraw: {
    builder:   { draft: '—', 'in-review': 'withdrawn', 'changes-requested': 'withdrawn', published: 'withdrawn', withdrawn: '—' },
    moderator: { draft: '—', 'in-review': 'withdrawn', 'changes-requested': 'withdrawn', published: 'withdrawn', withdrawn: '—' },
  },
  republish: {
    builder:   { draft: '—', 'in-review': '—', 'changes-requested': '—', published: '—', withdrawn: 'published' },
    moderator: { draft: '—', 'in-review': '—', 'changes-requested': '—', published: '—', withdrawn: 'published' },
  },
};

describe('the story workflow', () => {
  for (const action of storyActions) {
    for (const actor of ['builder', 'moderator'] as const) {
      for (const state of storyStates) {
        const want = EXPECTED[action][actor][state];
        it(`${actor} · ${action} · from ${state} → ${want}`, () => {
          // With a public revision and a reason, only the table decides.
          const r = canTransition(action, state, actor, { hasPublicRevision: true, reason: 'the dial is not readable' });
          if (want === '—') expect(r.ok).toBe(false);
          else expect(r).toEqual({ ok: true, to: want });
        });
      }
    }
  }

  it('withdrawing or asking for changes without a reason is refused with reason_required', () => {
    expect(canTransition('withdraw', 'published', 'builder', { hasPublicRevision: true })).toMatchObject({ ok: false, code: 'reason_required' });
    expect(canTransition('request-changes', 'in-review', 'moderator', { hasPublicRevision: false, reason: '  ' })).toMatchObject({
      ok: false,
      code: 'reason_required',
    });
  });

  it('a story never published cannot be withdrawn from review or republished', () => {
    expect(canTransition('withdraw', 'in-review', 'builder', { hasPublicRevision: false, reason: 'changed my mind' })).toMatchObject({
      ok: false,
      code: 'nothing_public',
    });
    expect(canTransition('republish', 'withdrawn', 'moderator', { hasPublicRevision: false })).toMatchObject({ ok: false, code: 'nothing_public' });
  });

  it('offers the builder of a draft only "submit", and a moderator of a story in review "request-changes", "publish" and "withdraw" when something is public', () => {
    expect(actionsFor('draft', 'builder', false)).toEqual(['submit']);
    expect(actionsFor('in-review', 'moderator', false)).toEqual(['request-changes', 'publish']);
    expect(actionsFor('in-review', 'moderator', true)).toEqual(['request-changes', 'publish', 'withdraw']);
  });
});
