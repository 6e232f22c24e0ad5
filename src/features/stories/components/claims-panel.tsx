import type { BrokenClaim } from '@shared/stories/claims';
import type { RenderedClaim } from '@shared/stories/render';
import { Button } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { Panel } from '@/components/ui/panel';
import { ClaimMark, WarnIcon } from './claim-evidence';

const problemWords: Record<Exclude<RenderedClaim['status']['state'], 'ok'> | 'broken', string> = {
  'unknown-target': 'No such evidence',
  'number-disagrees': 'Figure disagrees',
  'verdict-disagrees': 'Verdict disagrees',
  broken: 'Not a claim target',
};

interface Problem {
  id: string;
  kind: keyof typeof problemWords;
  text: string;
  target: string;
  message: string;
  start: number;
  end: number;
  line: number;
}

export interface ClaimsPanelProps {
  claims: readonly RenderedClaim[];
  broken: readonly BrokenClaim[];
  /** The build's readings and clearances are still loading, or failed: statuses cannot be trusted yet. */
  evidence: { pending: boolean; error: unknown; retry: () => void };
  /** Moves the cursor to the claim in the source. */
  onReveal: (start: number, end: number) => void;
  shortcut: string;
}

/**
 * Every claim in the text: first the ones that do not hold (unknown or broken target, a figure or
 * verdict the evidence does not bear out) with the reason, then those that do; each with a
 * button that puts the cursor on it in the text.
 */
export function ClaimsPanel({ claims, broken, evidence, onReveal, shortcut }: ClaimsPanelProps) {
  const problems: Problem[] = [
    ...broken.map((b, i) => ({ id: `b${i}`, kind: 'broken' as const, text: b.text, target: b.target, message: b.message, start: b.start, end: b.end, line: b.line })),
    ...claims.flatMap((c, i) =>
      c.status.state === 'ok'
        ? []
        : [{ id: `c${i}`, kind: c.status.state, text: c.text, target: `${c.kind}:${c.key}`, message: c.status.message, start: c.start, end: c.end, line: c.line }],
    ),
  ].sort((a, b) => a.start - b.start);
  const holding = claims.filter((c) => c.status.state === 'ok');
  const total = claims.length + broken.length;

  let body;
  if (evidence.pending) body = <LoadingState label="Checking claims against the build’s readings and clearances…" className="py-2" />;
  else if (evidence.error)
    body = (
      <ErrorState
        title="Claims cannot be checked right now"
        error={evidence.error}
        whatToDo="The build’s readings and clearances did not load, so every claim may look unknown. Your text is not affected; try again."
        onRetry={evidence.retry}
      />
    );
  else if (total === 0)
    body = (
      <p className="text-sm text-ink-muted">
        No claims yet. Select the words that state a figure (“end float is now three thou”) and press “Claim” or {shortcut} to link them to the reading
        or clearance they come from. Readers can then open the evidence.
      </p>
    );
  else
    body = (
      <div className="flex flex-col gap-3">
        {problems.length > 0 && (
          <ul aria-label="Claims that need attention" className="flex flex-col gap-2">
            {problems.map((p) => (
              <li key={p.id} className="rounded-md border border-danger/50 bg-danger-wash/40 px-3 py-2">
                <div className="flex flex-wrap items-start justify-between gap-2">
                  <p className="flex items-start gap-1.5 text-sm font-semibold">
                    <WarnIcon />
                    <span>
                      {problemWords[p.kind]} <span className="font-normal text-ink-muted">· line {p.line}</span>
                    </span>
                  </p>
                  <Button size="sm" variant="secondary" onClick={() => onReveal(p.start, p.end)}>
                    Show in text<span className="sr-only">: {p.text}</span>
                  </Button>
                </div>
                <p className="mt-1 text-sm">
                  “{p.text}” <span className="figures text-xs text-ink-muted">→ {p.target || '(no target)'}</span>
                </p>
                <p className="mt-0.5 text-sm text-ink-muted">{p.message}</p>
              </li>
            ))}
          </ul>
        )}
        {holding.length > 0 && (
          <div>
            <h3 className="mb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">Borne out by the evidence · {holding.length}</h3>
            <ul aria-label="Claims that hold" className="flex flex-col divide-y divide-rule">
              {holding.map((c, i) => (
                <li key={`${c.start}-${i}`} className="flex flex-wrap items-center justify-between gap-2 py-1.5 text-sm">
                  <span className="min-w-0">
                    <ClaimMark className="mr-1 inline size-3.5 align-[-0.15em] text-accent" />
                    “{c.text}” <span className="figures text-xs text-ink-muted">→ {c.kind}:{c.key}</span>
                  </span>
                  <Button size="sm" variant="quiet" onClick={() => onReveal(c.start, c.end)}>
                    Show in text<span className="sr-only">: {c.text}</span>
                  </Button>
                </li>
              ))}
            </ul>
          </div>
        )}
      </div>
    );

  return (
    <Panel
      title={
        <>
          Claims
          {total > 0 && !evidence.pending && (
            <span className="figures ml-2 text-sm font-normal text-ink-muted">
              {total} · {problems.length === 0 ? 'all hold' : `${problems.length} to fix`}
            </span>
          )}
        </>
      }
      description="Each claim is checked against the reading or clearance it links to, as you type."
    >
      {body}
    </Panel>
  );
}
