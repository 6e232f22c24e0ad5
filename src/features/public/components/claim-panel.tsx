import { lazy, Suspense, useId, type Ref } from 'react';
import type { UnitSystem } from '@shared/measure/format';
import type { PublicClaim } from '@shared/public/public-story.schema';
import { Button } from '@/components/ui/button';
import { EmptyState, LoadingState } from '@/components/ui/data-states';
import { cn } from '@/lib/cn';

// The evidence (band picture, working, recompute, clip) is its own chunk: a reader who never opens a claim never loads it.
const ClaimEvidence = lazy(() => import('./claim-evidence').then((m) => ({ default: m.ClaimEvidence })));

/**
 * The evidence beside the text: a column that stays in view on wide screens, a sheet from the
 * bottom on phones. It never covers the claim it belongs to, so the reader keeps their place.
 */
export function ClaimPanel({
  claim,
  claimKey,
  system,
  onClose,
  headingRef,
  className,
}: {
  claim: PublicClaim | null;
  claimKey: string;
  system: UnitSystem;
  onClose: () => void;
  headingRef: Ref<HTMLHeadingElement>;
  className?: string;
}) {
  const headingId = useId();
  return (
    <aside
      id="claim-panel"
      aria-labelledby={headingId}
      data-claim-panel={claimKey}
      data-print="hide"
      className={cn(
        'fixed inset-x-0 bottom-0 z-30 max-h-[70dvh] overflow-y-auto overscroll-contain rounded-t-lg border-t-2 border-accent bg-paper shadow-raised',
        'lg:sticky lg:top-4 lg:inset-x-auto lg:bottom-auto lg:z-auto lg:max-h-[calc(100dvh-2rem)] lg:rounded-lg lg:border lg:border-rule lg:border-t-accent lg:border-t-2 lg:shadow-none',
        className,
      )}
    >
      <header className="sticky top-0 z-10 flex items-start justify-between gap-3 border-b border-rule bg-paper px-4 py-3">
        <div className="min-w-0">
          <p className="text-2xs font-medium tracking-wide text-ink-muted uppercase">Evidence for the claim</p>
          <h2 id={headingId} ref={headingRef} tabIndex={-1} className="font-serif text-base leading-snug outline-none focus-visible:outline-2">
            {claim ? `“${claim.text}”` : 'Claim not found'}
          </h2>
        </div>
        <Button variant="quiet" size="sm" onClick={onClose} aria-label="Close the evidence (Escape)" className="shrink-0">
          <svg viewBox="0 0 16 16" className="size-4" aria-hidden="true">
            <path d="M4 4l8 8M12 4l-8 8" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
          </svg>
          <span className="hidden sm:inline">Close</span>
        </Button>
      </header>
      <div className="px-4 py-4">
        {claim ? (
          <Suspense fallback={<LoadingState label="Loading the evidence…" />}>
            <ClaimEvidence claim={claim} system={system} />
          </Suspense>
        ) : (
          <EmptyState title="This claim is not in the published story">
            The address names “{claimKey}”, which the current revision does not claim. It may have been reworded in a newer revision. Close
            this and pick an underlined claim in the text.
          </EmptyState>
        )}
      </div>
    </aside>
  );
}
