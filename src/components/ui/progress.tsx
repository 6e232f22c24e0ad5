import type { ReactNode } from 'react';
import { cn } from '@/lib/cn';

export interface ProgressProps {
  /** 0…max, or null when the amount is not known yet (shows a moving mark instead). */
  value: number | null;
  max?: number;
  /** Names the bar for screen readers, e.g. "Upload of gearbox.mp4". */
  label: string;
  /** Read out instead of the bare number, e.g. "42 % (12.3 of 29.0 MB)". */
  valueText?: string;
  /** Shown beside the bar in figures; give it when the number matters at a glance. */
  children?: ReactNode;
  size?: 'sm' | 'md';
  className?: string;
}

/** A thin ink bar on a rule-coloured track: how much of an upload or a job is done. */
export function Progress({ value, max = 100, label, valueText, children, size = 'md', className }: ProgressProps) {
  const known = value !== null && Number.isFinite(value);
  const fraction = known ? Math.min(1, Math.max(0, value / max)) : 0;
  return (
    <div className={cn('flex items-center gap-2', className)}>
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={max}
        aria-valuenow={known ? Math.round(value * 10) / 10 : undefined}
        aria-valuetext={valueText}
        className={cn('relative min-w-16 flex-1 overflow-hidden rounded-full bg-rule', size === 'sm' ? 'h-1' : 'h-1.5')}
      >
        {known ? (
          <span
            className="absolute inset-y-0 left-0 rounded-full bg-ink transition-[width] duration-200"
            style={{ width: `${fraction * 100}%` }}
          />
        ) : (
          <span className="absolute inset-y-0 left-0 w-1/3 animate-scribe bg-ink" />
        )}
      </div>
      {children !== undefined && <span className="figures shrink-0 text-xs text-ink-muted">{children}</span>}
    </div>
  );
}
