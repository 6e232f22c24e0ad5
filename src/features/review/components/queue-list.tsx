import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import type { z } from 'zod';
import type { queueItemSchema } from '@shared/review/review.schema';
import { Badge } from '@/components/ui/badge';
import { Button, ButtonLink } from '@/components/ui/button';
import { Progress } from '@/components/ui/progress';
import { ApiError, errorMessage } from '@/lib/api';
import { useClaimStory } from '../api/review-mutations';
import { clockTime, exactTime, relativeTime } from '../lib/review-format';

type QueueItem = z.infer<typeof queueItemSchema>;

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Stories waiting for review, oldest sent first, each with what it relies on and who holds it. */
export function QueueList({ items, meId, now }: { items: QueueItem[]; meId: number | undefined; now: Date }) {
  return (
    <ol className="flex flex-col gap-3" aria-label="Stories waiting for review, oldest sent first">
      {items.map((item) => (
        <li key={item.storyId}>
          <QueueRow item={item} meId={meId} now={now} />
        </li>
      ))}
    </ol>
  );
}

function QueueRow({ item, meId, now }: { item: QueueItem; meId: number | undefined; now: Date }) {
  const navigate = useNavigate();
  const claim = useClaimStory();
  const [refusal, setRefusal] = useState<string | null>(null);
  const total = item.readings + item.clearances;
  const done = total - item.leftToCheck;
  const live = item.claim && new Date(item.claim.expiresAt) > now ? item.claim : null;
  const mine = live?.moderatorId === meId;
  const own = item.builderId === meId;

  async function take() {
    setRefusal(null);
    try {
      await claim.mutateAsync(item.storyId);
      await navigate(`/review/stories/${item.storyId}`);
    } catch (error) {
      setRefusal(error instanceof ApiError && error.code === 'claimed_by_other' ? `Taken already: ${error.message}` : errorMessage(error));
    }
  }

  return (
    <article
      className="grid gap-x-6 gap-y-3 rounded-lg border border-rule bg-paper p-4 md:grid-cols-[minmax(0,1fr)_15rem_auto] md:items-center"
      data-queue-story={item.storyId}
      aria-labelledby={`queue-${item.storyId}`}
    >
      <div className="min-w-0">
        <div className="flex flex-wrap items-center gap-2">
          <h2 id={`queue-${item.storyId}`} className="text-md font-semibold">
            {item.title}
          </h2>
          {item.republication && (
            <Badge tone="accent" data-republication="">
              <svg viewBox="0 0 16 16" className="size-3.5" aria-hidden="true">
                <path d="M13 8a5 5 0 1 1-1.6-3.7" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
                <path d="M12.2 1.6v3.2H9" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" strokeLinejoin="round" />
              </svg>
              New revision of a published story
            </Badge>
          )}
        </div>
        <p className="text-sm text-ink-muted">
          {item.builderName} · {item.buildTitle}
        </p>
        <p className="mt-1 text-sm">
          Sent <time dateTime={item.submittedAt}>{relativeTime(item.submittedAt, now)}</time>{' '}
          <span className="text-ink-muted">({exactTime(item.submittedAt)})</span>
        </p>
        <p className="text-sm text-ink-muted">
          Relies on {plural(item.readings, 'reading')} and {plural(item.clearances, 'clearance')}
        </p>
        {item.claimProblems.length > 0 && (
          <div className="mt-2 text-sm" data-claim-problems={item.claimProblems.length}>
            <p className="font-semibold text-danger">
              {item.claimProblems.length === 1 ? 'A claim disagrees with its evidence' : `${item.claimProblems.length} claims disagree with their evidence`}
            </p>
            <ul className="list-disc pl-5">
              {item.claimProblems.map((message, i) => (
                <li key={i}>{message}</li>
              ))}
            </ul>
          </div>
        )}
      </div>
      <div className="flex flex-col gap-1">
        <Progress
          value={total === 0 ? 0 : done}
          max={Math.max(total, 1)}
          label={`Checked so far in “${item.title}”`}
          valueText={total === 0 ? 'nothing to check' : `${done} of ${total} checked, ${item.leftToCheck} left`}
          size="sm"
        />
        <p className="text-sm" data-left-to-check={item.leftToCheck}>
          {total === 0 ? (
            <span className="text-ink-muted">Cites no readings or clearances</span>
          ) : item.leftToCheck === 0 ? (
            <>All {total} checked</>
          ) : (
            <>
              <span className="font-semibold">{item.leftToCheck} left to check</span> <span className="text-ink-muted">of {total}</span>
            </>
          )}
        </p>
        <p className="text-xs text-ink-muted" data-claim-holder={live?.moderatorName ?? ''}>
          {live ? (
            <>
              {mine ? 'You hold it' : `Held by ${live.moderatorName}`} until{' '}
              <time dateTime={live.expiresAt} title={exactTime(live.expiresAt)}>
                {clockTime(live.expiresAt)}
              </time>{' '}
              ({relativeTime(live.expiresAt, now)})
            </>
          ) : (
            'Not taken by anyone'
          )}
        </p>
      </div>
      <div className="flex flex-col items-start gap-2 md:items-end">
        {own ? (
          <p className="max-w-48 text-xs text-ink-muted">Your own build: another moderator reviews it.</p>
        ) : mine ? (
          <ButtonLink to={`/review/stories/${item.storyId}`} variant="primary" size="sm">
            Continue review
          </ButtonLink>
        ) : (
          <Button variant={live ? 'secondary' : 'primary'} size="sm" onClick={() => void take()} loading={claim.isPending} loadingText="Taking…">
            Take for review
          </Button>
        )}
        {!own && !mine && (
          <ButtonLink to={`/review/stories/${item.storyId}`} variant="quiet" size="sm">
            Look without taking
          </ButtonLink>
        )}
      </div>
      {refusal && (
        <p role="alert" className="text-sm text-danger md:col-span-3">
          {refusal}
        </p>
      )}
    </article>
  );
}
