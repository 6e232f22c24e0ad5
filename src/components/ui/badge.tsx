import type { ComponentProps, ReactNode } from 'react';
import { verdictWords, type Verdict } from '@shared/measure/spec';
import { limitFact, type LimitKind } from '@shared/public/spec-limits';
import { cn } from '@/lib/cn';

export type BadgeTone = 'neutral' | 'strong' | 'accent';

const tones: Record<BadgeTone, string> = {
  neutral: 'border-rule bg-paper-2 text-ink',
  strong: 'border-ink bg-ink text-paper',
  accent: 'border-accent/40 bg-accent-wash text-accent-strong',
};

/** A small label: a role, a status, a count. */
export function Badge({ tone = 'neutral', className, ...props }: ComponentProps<'span'> & { tone?: BadgeTone }) {
  return (
    <span
      className={cn(
        'inline-flex items-center gap-1 rounded-sm border px-1.5 py-px text-xs font-medium whitespace-nowrap',
        tones[tone],
        className,
      )}
      {...props}
    />
  );
}

/** A verdict code (from shared/measure): in the band, outside it, or too close to the limit to say. */
export type VerdictCode = Verdict;

/** Sentence-case words for a verdict, from the shared vocabulary ("Within spec"). */
export function verdictLabel(verdict: VerdictCode): string {
  const words = verdictWords[verdict];
  return words.charAt(0).toUpperCase() + words.slice(1);
}

const verdictColour: Record<VerdictCode, string> = {
  conforms: 'text-verdict-conforms',
  'does-not-conform': 'text-verdict-nonconform',
  undecided: 'text-verdict-undecided',
};

/**
 * The verdict shapes in a 16×16 box, for use inside any SVG (the badge, the band picture):
 * filled circle, open cross, half-filled diamond. `onPaper` fills the open parts with the page
 * colour so the shape stays readable over lines and bands.
 */
export function VerdictGlyph({ verdict, onPaper = false }: { verdict: VerdictCode; onPaper?: boolean }) {
  const open = onPaper ? 'var(--color-paper)' : 'none';
  return (
    <>
      {verdict === 'conforms' && (
        <circle cx="8" cy="8" r="5.75" fill="currentColor" {...(onPaper && { stroke: 'var(--color-paper)', strokeWidth: 1 })} />
      )}
      {verdict === 'does-not-conform' && (
        <path
          transform="rotate(45 8 8)"
          d="M6.1 1.6h3.8v4.5h4.5v3.8H9.9v4.5H6.1V9.9H1.6V6.1h4.5z"
          fill={open}
          stroke="currentColor"
          strokeWidth="1.3"
          strokeLinejoin="round"
        />
      )}
      {verdict === 'undecided' && (
        <>
          {onPaper && <path d="M8 1.5 14.5 8 8 14.5 1.5 8z" fill={open} />}
          <path d="M8 1.5 1.5 8 8 14.5z" fill="currentColor" />
          <path d="M8 1.5 14.5 8 8 14.5 1.5 8z" fill="none" stroke="currentColor" strokeWidth="1.3" strokeLinejoin="round" />
        </>
      )}
    </>
  );
}

/**
 * The verdict's shape alone: filled circle, open cross, half-filled diamond.
 * Decorative unless `label` is given (then it is an image with that name).
 */
export function VerdictMark({ verdict, label, className }: { verdict: VerdictCode; label?: string; className?: string }) {
  const a11y = label ? { role: 'img', 'aria-label': label } : { 'aria-hidden': true as const };
  return (
    <svg viewBox="0 0 16 16" className={cn('size-[1.05em] shrink-0', verdictColour[verdict], className)} {...a11y}>
      <VerdictGlyph verdict={verdict} />
    </svg>
  );
}

export interface VerdictBadgeProps {
  verdict: VerdictCode;
  /**
   * Replaces the standard words, e.g. "Current". Keep it a verdict against the spec: words about
   * the preferred band or the reject limit are shown as a `LimitFact` instead (see below).
   */
  children?: ReactNode;
  /** The rule beside the verdict, e.g. "guarded by U, k = 2". Shown muted after the words. */
  rule?: ReactNode;
  size?: 'sm' | 'md';
  className?: string;
}

/** Which secondary limit words passed as a badge's children are about, if any. */
function limitKindOf(children: ReactNode): LimitKind | null {
  if (typeof children !== 'string') return null;
  if (/preferred band/i.test(children)) return 'preferred';
  if (/reject limit/i.test(children)) return 'reject';
  return null;
}

/**
 * Where a value lies against the preferred band or the reject limit, in plain words ("Outside the
 * preferred band 0.003–0.005 in."): a secondary fact beside the one verdict, so it has neither a
 * verdict's shape nor its colour.
 */
export function LimitFact({ kind, verdict, limit = null, className }: { kind: LimitKind; verdict: VerdictCode; limit?: string | null; className?: string }) {
  return (
    <span data-limit-fact={kind} className={cn('text-xs text-ink', className)}>
      {limitFact(kind, verdict, limit)}
    </span>
  );
}

/**
 * A verdict as shape + words (+ the rule applied), readable in print and without colour. One per
 * judged value: a badge asked to carry a judgement against the preferred band or the reject limit
 * renders it as a `LimitFact` instead, so no screen shows "Out of spec" beside a green "Clear of the
 * reject limit".
 */
export function VerdictBadge({ verdict, children, rule, size = 'md', className }: VerdictBadgeProps) {
  const limitKind = limitKindOf(children);
  if (limitKind) return <LimitFact kind={limitKind} verdict={verdict} className={className} />;
  return (
    <span
      data-verdict={verdict}
      className={cn(
        'inline-flex items-center gap-1.5 rounded-sm border border-current/35 bg-paper font-medium whitespace-nowrap',
        size === 'sm' ? 'px-1.5 py-px text-xs' : 'px-2 py-0.5 text-sm',
        verdictColour[verdict],
        className,
      )}
    >
      <VerdictMark verdict={verdict} />
      <span>{children ?? verdictLabel(verdict)}</span>
      {rule && <span className="font-normal text-ink-muted">· {rule}</span>}
    </span>
  );
}
