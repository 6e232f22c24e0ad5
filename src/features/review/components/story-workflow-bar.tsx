import { useEffect, useId, useState } from 'react';
import { useQuery } from '@tanstack/react-query';
import { Link } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { transitionInputSchema, type PublishBlocker } from '@shared/review/review.schema';
import { actionsFor, canTransition, transitions, type StoryAction } from '@shared/review/workflow';
import { storyStateSentence, type StoryState } from '@shared/stories/story.schema';
import { Button, type ButtonVariant } from '@/components/ui/button';
import { ConfirmDialog, Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { Field, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { reviewQueries } from '../api/review-queries';
import { useStoryTransition } from '../api/review-mutations';

export interface StoryWorkflowBarProps {
  storyId: number;
  state: StoryState;
  /** The story version on screen; a move made from a stale one is refused (409 edit_conflict). */
  lockVersion: number;
  /** The viewer is the story's builder (else a moderator or admin). */
  isBuilder: boolean;
  /**
   * Whether an earlier revision is public (withdraw and republish depend on it). Leave it out
   * where the page does not know: the bar then reads it from the review sheet.
   */
  hasPublicRevision?: boolean;
  /**
   * What stops the forward move (sending for review for the builder, publishing for a
   * moderator): the button is disabled and says why until the list is empty. Left out, a
   * moderator's bar reads the publish gate from the review sheet while the story is in review.
   */
  blockers?: readonly PublishBlocker[];
  /** The page lists the blockers right beside the bar already: say how many, not each again. */
  blockersListedNearby?: boolean;
  /**
   * The page shows why the move is closed itself (a `GateClosed` with this id, where it has room),
   * so the bar only disables the button and points to it.
   */
  gateShownAt?: string;
  /** Called after a move succeeded, with the new state. */
  onMoved?: (to: StoryState) => void;
}

type TransitionForm = z.input<typeof transitionInputSchema>;

const variantOf: Record<StoryAction, ButtonVariant> = {
  submit: 'primary',
  'request-changes': 'secondary',
  publish: 'primary',
  withdraw: 'danger',
  republish: 'secondary',
};

const doneWords: Record<StoryAction, string> = {
  submit: 'Sent for review',
  'request-changes': 'Sent back to the builder for changes',
  publish: 'Published',
  withdraw: 'Withdrawn',
  republish: 'Public again',
};

const reasonExamples: Partial<Record<StoryAction, string>> = {
  'request-changes': 'e.g. “The blade in the still is not the 0.004 in logged: re-film the bracket or correct the reading.”',
  withdraw: 'e.g. “The end float was measured before the thrust washers were seated; it will be remeasured.”',
};

const confirmWords: Partial<Record<StoryAction, { title: string; description: string }>> = {
  publish: {
    title: 'Publish this story?',
    description: 'Its text and the figures of every claim, as checked now, become public, and the builder’s followers are told by e-mail.',
  },
  republish: {
    title: 'Make this story public again?',
    description: 'The last published revision is shown again, as it was.',
  },
};

/**
 * The publishing workflow of one story as buttons: only the moves shared/review/workflow.ts allows
 * this viewer from this state, a reason asked for where the move needs one, and the server's
 * refusal shown in full (for a blocked publish, every reason).
 */
export function StoryWorkflowBar({
  storyId,
  state,
  lockVersion,
  isBuilder,
  hasPublicRevision,
  blockers,
  blockersListedNearby,
  gateShownAt,
  onMoved,
}: StoryWorkflowBarProps) {
  const { toast } = useToast();
  const move = useStoryTransition(storyId);
  const [asking, setAsking] = useState<StoryAction | null>(null);
  const [confirming, setConfirming] = useState<StoryAction | null>(null);
  const [refusal, setRefusal] = useState<ApiError | Error | null>(null);
  const [publicNow, setPublicNow] = useState<{ revision: number | null } | null>(null);
  const refusalId = useId();
  // Only where it changes which moves exist: withdrawing a story in review or republishing one.
  // And for a moderator's publish button, the gate, when the page did not pass it.
  const needsSheet =
    (hasPublicRevision === undefined && (state === 'in-review' || state === 'changes-requested')) || (!isBuilder && blockers === undefined && state === 'in-review');
  const sheet = useQuery({ ...reviewQueries.sheet(storyId), enabled: needsSheet });
  const isPublic = hasPublicRevision ?? (state === 'published' || state === 'withdrawn' || (sheet.data?.story.hasPublicRevision ?? false));
  const actor = isBuilder ? 'builder' : 'moderator';
  const actions = actionsFor(state, actor, isPublic);
  const gated: StoryAction = isBuilder ? 'submit' : 'publish';
  const gate = blockers ?? (isBuilder ? [] : (sheet.data?.blockers ?? []));
  const ownGateId = useId();
  const gateId = gateShownAt ?? ownGateId;
  const gateClosed = actions.includes(gated) && gate.length > 0;

  // A refusal is about the story as it was: once it changes (a save, a check, a move), it goes.
  const gateKey = gate.map((b) => b.message).join('\n');
  useEffect(() => setRefusal(null), [state, lockVersion, gateKey]);

  async function run(action: StoryAction, reason?: string) {
    setRefusal(null);
    try {
      const result = await move.mutateAsync({ action, lockVersion, ...(reason !== undefined && { reason }) });
      toast({ tone: 'success', title: doneWords[action], description: `The story is now ${storyStateSentence[result.state]}.` });
      // What the public now sees, one click away.
      setPublicNow(action === 'publish' || action === 'republish' ? { revision: result.revision } : null);
      setAsking(null);
      setConfirming(null);
      onMoved?.(result.state);
      return null;
    } catch (error) {
      setConfirming(null);
      if (error instanceof ApiError && error.details.some((d) => d.path === 'reason')) return error;
      setAsking(null);
      setRefusal(error instanceof Error ? error : new Error(errorMessage(error)));
      return null;
    }
  }

  function start(action: StoryAction) {
    const t = transitions.find((x) => x.action === action);
    if (t?.needsReason) setAsking(action);
    else if (confirmWords[action]) setConfirming(action);
    else void run(action);
  }

  return (
    <div className="flex flex-col gap-3" data-workflow-bar="">
      <p className="text-sm">
        This story is <strong data-story-state={state}>{storyStateSentence[state]}</strong>.
        {actions.length === 0 && <span className="text-ink-muted"> {nothingToDo(state, isBuilder)}</span>}
      </p>
      {actions.length > 0 && (
        <div className="flex flex-wrap gap-2" role="group" aria-label="Workflow" aria-describedby={refusal ? refusalId : undefined}>
          {actions.map((action) => (
            <Button
              key={action}
              variant={variantOf[action]}
              size="sm"
              onClick={() => start(action)}
              loading={move.isPending && move.variables?.action === action}
              disabled={move.isPending || (action === gated && gateClosed)}
              aria-describedby={action === gated && gateClosed ? gateId : undefined}
            >
              {labelOf(action)}
              {transitions.find((t) => t.action === action)?.needsReason && '…'}
            </Button>
          ))}
        </div>
      )}
      {gateClosed && !gateShownAt && <GateClosed id={gateId} action={gated} blockers={gate} listedNearby={blockersListedNearby ?? false} />}
      {refusal && <Refusal id={refusalId} error={refusal} onDismiss={() => setRefusal(null)} />}
      {publicNow && state === 'published' && (
        <p role="status" className="text-sm" data-public-link="">
          {publicNow.revision ? `Revision ${publicNow.revision} is public. ` : 'It is public again. '}
          <Link to={`/stories/${storyId}`}>Open the public page</Link>
        </p>
      )}

      {asking && (
        <ReasonDialog
          key={asking}
          action={asking}
          state={state}
          actor={actor}
          hasPublicRevision={isPublic}
          lockVersion={lockVersion}
          pending={move.isPending}
          onCancel={() => setAsking(null)}
          onSubmit={(reason) => run(asking, reason)}
        />
      )}
      {confirming && (
        <ConfirmDialog
          open
          onOpenChange={(open) => !open && setConfirming(null)}
          title={confirmWords[confirming]?.title ?? labelOf(confirming)}
          description={confirmWords[confirming]?.description ?? ''}
          confirmLabel={labelOf(confirming)}
          onConfirm={() => void run(confirming)}
          pending={move.isPending}
        />
      )}
    </div>
  );
}

function labelOf(action: StoryAction): string {
  return transitions.find((t) => t.action === action)?.label ?? action;
}

function nothingToDo(state: StoryState, isBuilder: boolean): string {
  if (isBuilder) {
    if (state === 'in-review') return 'A moderator is checking its readings; you will get an e-mail when they are done.';
    return 'There is no move for you to make from here.';
  }
  if (state === 'draft') return 'The builder has not sent it for review yet.';
  if (state === 'changes-requested') return 'It is back with the builder; it returns here when they send it again.';
  return 'There is no move for a moderator to make from here.';
}

/** Why the forward move is not offered yet, before anyone presses it. */
export function GateClosed({ id, action, blockers, listedNearby = false }: { id: string; action: StoryAction; blockers: readonly PublishBlocker[]; listedNearby?: boolean }) {
  const n = blockers.length;
  const what = action === 'submit' ? 'sent for review' : 'published';
  const things = action === 'submit' ? `claim${n === 1 ? '' : 's'} to correct` : `problem${n === 1 ? '' : 's'} to resolve`;
  return (
    <div id={id} className="max-w-prose rounded-md border border-line border-l-4 border-l-danger bg-paper-2/60 px-3 py-2 text-sm" data-gate={action}>
      <p className="font-medium">
        It cannot be {what} yet: {n} {things}
        {listedNearby ? ', listed under “What stops publishing”.' : ':'}
      </p>
      {!listedNearby && (
        <ul className="mt-1 list-disc pl-5" aria-label={action === 'submit' ? 'What to correct before sending' : 'What stops publishing'}>
          {blockers.map((b, i) => (
            <li key={`${b.code}-${i}`}>{b.message}</li>
          ))}
        </ul>
      )}
    </div>
  );
}

/** The server said no: what, and for a blocked publish every reason. */
function Refusal({ id, error, onDismiss }: { id: string; error: ApiError | Error; onDismiss: () => void }) {
  const blocked = error instanceof ApiError && (error.code === 'publish_blocked' || error.code === 'submit_blocked');
  const conflict = error instanceof ApiError && error.code === 'edit_conflict';
  return (
    <div id={id} role="alert" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm" data-refusal={error instanceof ApiError ? error.code : 'error'}>
      <p className="font-medium">{errorMessage(error)}</p>
      {blocked && error.details.length > 0 && (
        <ul className="mt-1 list-disc pl-5" aria-label={error.code === 'submit_blocked' ? 'Why it cannot be sent' : 'Why it cannot be published'}>
          {error.details.map((d, i) => (
            <li key={`${d.path ?? ''}-${i}`}>{d.message}</li>
          ))}
        </ul>
      )}
      {conflict && <p className="mt-1 text-ink-muted">The page now shows the stored version; look it over, then try again.</p>}
      <Button variant="quiet" size="sm" className="mt-1 -ml-2" onClick={onDismiss}>
        Dismiss
      </Button>
    </div>
  );
}

function ReasonDialog({
  action,
  state,
  actor,
  hasPublicRevision,
  lockVersion,
  pending,
  onCancel,
  onSubmit,
}: {
  action: StoryAction;
  state: StoryState;
  actor: 'builder' | 'moderator';
  hasPublicRevision: boolean;
  lockVersion: number;
  pending: boolean;
  onCancel: () => void;
  /** Resolves to the refusal when it was about the reason (shown beside the field). */
  onSubmit: (reason: string) => Promise<ApiError | null>;
}) {
  const form = useForm<TransitionForm>({
    resolver: zodResolver(transitionInputSchema),
    defaultValues: { action, reason: '', lockVersion },
  });
  const { register, handleSubmit, setError, formState } = form;
  const submit = handleSubmit(async (values) => {
    const reason = values.reason?.trim() ?? '';
    // The same rule the server applies, so a missing reason is caught before the round trip.
    const verdict = canTransition(action, state, actor, { hasPublicRevision, reason });
    if (!verdict.ok && verdict.code === 'reason_required') {
      setError('reason', { message: verdict.message });
      return;
    }
    const refused = await onSubmit(reason);
    const detail = refused?.details.find((d) => d.path === 'reason');
    if (detail) setError('reason', { message: detail.message });
  });
  const title = action === 'request-changes' ? 'Ask the builder for changes' : `${labelOf(action)}: give a reason`;
  return (
    <Dialog open onOpenChange={(open) => !open && onCancel()}>
      <DialogContent
        title={title}
        description="The reason is sent to the builder and kept in the story’s record."
        footer={
          <>
            <DialogClose asChild>
              <Button variant="secondary">Cancel</Button>
            </DialogClose>
            <Button variant={variantOf[action] === 'danger' ? 'danger' : 'primary'} type="submit" form={`reason-${action}`} loading={pending}>
              {labelOf(action)}
            </Button>
          </>
        }
      >
        <form id={`reason-${action}`} noValidate onSubmit={submit}>
          <Field label="Reason" required hint={reasonExamples[action]} error={formState.errors.reason?.message}>
            <Textarea {...register('reason')} rows={4} autoFocus />
          </Field>
        </form>
      </DialogContent>
    </Dialog>
  );
}
