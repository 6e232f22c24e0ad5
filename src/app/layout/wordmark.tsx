import { cn } from '@/lib/cn';

/**
 * Benchproof's mark: three feeler blades fanned from their pivot, the top one
 * in marking blue. Drawn for 28 px; scales cleanly and prints in ink.
 */
export function BenchproofMark({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={cn('size-7 shrink-0', className)} aria-hidden="true">
      <g strokeWidth="1.5" strokeLinejoin="round">
        <rect x="7" y="20" width="21" height="5" rx="2.5" transform="rotate(-12 9.5 22.5)" className="fill-paper stroke-ink" />
        <rect x="7" y="20" width="21" height="5" rx="2.5" transform="rotate(-38 9.5 22.5)" className="fill-paper stroke-ink" />
        <rect x="7" y="20" width="21" height="5" rx="2.5" transform="rotate(-64 9.5 22.5)" className="fill-accent stroke-accent" />
      </g>
      <circle cx="9.5" cy="22.5" r="2.6" strokeWidth="1.5" className="fill-paper stroke-ink" />
    </svg>
  );
}

/** Mark and name together, for the header and standalone pages. */
export function Wordmark({ className }: { className?: string }) {
  return (
    <span className={cn('inline-flex items-center gap-2 text-ink', className)}>
      <BenchproofMark />
      <span className="text-lg font-semibold tracking-tight">
        Bench<span className="font-normal">proof</span>
      </span>
    </span>
  );
}
