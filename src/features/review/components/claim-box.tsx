import { useEffect, useRef, useState } from 'react';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { Button } from '@/components/ui/button';
import { ApiError, errorMessage } from '@/lib/api';
import { useClaimStory, useReleaseClaim } from '../api/review-mutations';
import { clockTime, exactTime, relativeTime } from '../lib/review-format';

/** Warn the holder this long before the hold runs out. */
const HOLD_WARNING_MS = 5 * 60_000;

/**
 * Who holds the story for review and until when; take it, renew it (by taking it again) or let
 * it go. The holder is warned five minutes before the hold runs out, and told when it has.
 */
export function ClaimBox({ sheet, meId, now }: { sheet: ReviewSheet; meId: number | undefined; now: Date }) {
  const take = useClaimStory();
  const release = useReleaseClaim();
  const [problem, setProblem] = useState<string | null>(null);
  const claim = sheet.claim && new Date(sheet.claim.expiresAt) > now ? sheet.claim : null;
  const mine = claim?.moderatorId === meId;
  const inReview = sheet.story.state === 'in-review';
  const msLeft = claim && mine ? new Date(claim.expiresAt).getTime() - now.getTime() : null;
  // A hold of ours that ran out while the page was open: say so, rather than let it vanish.
  const heldUntil = useRef<string | null>(null);
  const [lapsedAt, setLapsedAt] = useState<string | null>(null);
  useEffect(() => {
    if (mine && claim) {
      heldUntil.current = claim.expiresAt;
      setLapsedAt(null);
    } else if (heldUntil.current) {
      // Ours went: lapsed if its time passed; let go or taken over otherwise (the page says who holds it).
      if (new Date(heldUntil.current) <= now) setLapsedAt(heldUntil.current);
      heldUntil.current = null;
    }
  }, [mine, claim, now]);

  async function act(what: 'take' | 'release') {
    setProblem(null);
    try {
      if (what === 'take') await take.mutateAsync(sheet.story.id);
      else await release.mutateAsync(sheet.story.id);
    } catch (error) {
      setProblem(error instanceof ApiError && error.code === 'claimed_by_other' ? `Taken already: ${error.message}` : errorMessage(error));
    }
  }

  return (
    <div className="flex flex-col gap-2 text-sm" data-claim-box={claim ? (mine ? 'mine' : 'other') : 'none'}>
      {claim ? (
        <p>
          {mine ? <strong>You hold this story</strong> : <strong>{claim.moderatorName} holds this story</strong>} until{' '}
          <time dateTime={claim.expiresAt} title={exactTime(claim.expiresAt)} className="figures">
            {clockTime(claim.expiresAt)}
          </time>{' '}
          <span className="text-ink-muted">({relativeTime(claim.expiresAt, now)})</span>.
        </p>
      ) : lapsedAt && inReview ? (
        <p role="alert" className="text-danger" data-hold="lapsed">
          Your hold on this story ran out at{' '}
          <time dateTime={lapsedAt} title={exactTime(lapsedAt)} className="figures">
            {clockTime(lapsedAt)}
          </time>
          . Nothing you checked is lost; take it again to go on checking.
        </p>
      ) : (
        <p>{inReview ? 'No one holds this story. Take it before you check anything, so no one else checks it at the same time.' : 'Only a story in review can be taken.'}</p>
      )}
      {msLeft !== null && msLeft <= HOLD_WARNING_MS && (
        <p role="status" className="rounded-sm border-l-4 border-verdict-undecided bg-paper-2 px-2 py-1" data-hold="ending">
          Your hold ends in {Math.max(1, Math.ceil(msLeft / 60_000))} minute{Math.ceil(msLeft / 60_000) === 1 ? '' : 's'}. Renew it to keep checking.
        </p>
      )}
      {inReview && (
        <div className="flex flex-wrap gap-2">
          {(!claim || !mine) && (
            <Button variant={claim ? 'secondary' : 'primary'} size="sm" onClick={() => void act('take')} loading={take.isPending} loadingText="Taking…">
              Take for review
            </Button>
          )}
          {mine && (
            <>
              <Button variant="secondary" size="sm" onClick={() => void act('take')} loading={take.isPending} loadingText="Renewing…">
                Renew for 30 minutes
              </Button>
              <Button variant="quiet" size="sm" onClick={() => void act('release')} loading={release.isPending} loadingText="Letting go…">
                Let go
              </Button>
            </>
          )}
        </div>
      )}
      {problem && (
        <p role="alert" className="text-danger">
          {problem}
        </p>
      )}
    </div>
  );
}
