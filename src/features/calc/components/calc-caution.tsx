import { cn } from '@/lib/cn';

/** The standing caution beside every verdict: the figures are the builder's own. */
export function CalcCaution({ className }: { className?: string }) {
  return (
    <p className={cn('flex items-start gap-2 rounded-md border border-rule bg-paper-2/60 px-3 py-2 text-sm text-ink', className)} data-calc-caution="">
      <svg viewBox="0 0 16 16" className="mt-0.5 size-4 shrink-0" aria-hidden="true">
        <circle cx="8" cy="8" r="6.25" fill="none" stroke="currentColor" strokeWidth="1.5" />
        <path d="M8 7.2v4M8 4.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
      </svg>
      <span>
        The figures are yours, and so is the spec. Follow the manufacturer’s manual, local rules and qualified practice before you
        rely on a verdict here.
      </span>
    </p>
  );
}
