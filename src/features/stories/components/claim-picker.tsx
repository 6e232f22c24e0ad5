import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { useId, useMemo, useState, type KeyboardEvent } from 'react';
import { Dialog as RadixDialog } from 'radix-ui';
import type { Clearance } from '@shared/clearances/clearance.schema';
import type { Reading } from '@shared/readings/reading.schema';
import type { Verdict } from '@shared/measure/spec';
import type { ClaimKind } from '@shared/stories/claims';
import { VerdictBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { cn } from '@/lib/cn';

/** One thing a claim can point at, as the picker lists it. */
export interface PickableTarget {
  kind: ClaimKind;
  key: string;
  name: string;
  value: string;
  verdict: Verdict | null;
  rule: string | null;
}

/** The build's clearances first (what stories usually claim), then its readings. */
export function pickableTargets(readings: readonly Reading[], clearances: readonly Clearance[]): PickableTarget[] {
  return [
    ...clearances.map((c) => ({
      kind: 'clearance' as const,
      key: c.key,
      name: c.name,
      value: c.result?.display ?? `cannot be worked out: ${c.problems.join(' ')}`,
      verdict: c.result?.verdict ?? null,
      rule: c.result?.rule ? `${c.result.rule} rule, k = ${formatCoverageFactor(c.result.coverageFactor)}` : null,
    })),
    ...readings.map((r) => ({ kind: 'reading' as const, key: r.key, name: r.name, value: r.result.display, verdict: null, rule: null })),
  ];
}

export interface ClaimPickerProps {
  open: boolean;
  onOpenChange: (open: boolean) => void;
  targets: PickableTarget[] | undefined;
  loading: boolean;
  error: unknown;
  onRetry: () => void;
  /** The words selected in the text, shown so the builder knows what will be linked. */
  selection: string;
  shortcut: string;
  onPick: (target: PickableTarget) => void;
  /** Focus goes back here when the picker closes, so typing continues where it was. */
  onClosed: () => void;
}

/** Type to search the build's readings and clearances; Up/Down to move, Enter to link the choice. */
export function ClaimPicker({ open, onOpenChange, targets, loading, error, onRetry, selection, shortcut, onPick, onClosed }: ClaimPickerProps) {
  const [query, setQuery] = useState('');
  const [active, setActive] = useState(0);
  const listId = useId();
  const found = useMemo(() => {
    const words = query.trim().toLowerCase().split(/\s+/).filter(Boolean);
    return (targets ?? []).filter((t) => words.every((w) => `${t.name} ${t.key} ${t.kind}`.toLowerCase().includes(w)));
  }, [targets, query]);
  const activeIndex = Math.min(active, Math.max(0, found.length - 1));
  const optionId = (i: number) => `${listId}-${i}`;

  function onKeyDown(event: KeyboardEvent<HTMLInputElement>) {
    if (event.key === 'ArrowDown') {
      event.preventDefault();
      setActive((i) => Math.min(found.length - 1, i + 1));
    } else if (event.key === 'ArrowUp') {
      event.preventDefault();
      setActive((i) => Math.max(0, i - 1));
    } else if (event.key === 'Enter') {
      event.preventDefault();
      const target = found[activeIndex];
      if (target) onPick(target);
    }
  }

  return (
    <RadixDialog.Root
      open={open}
      onOpenChange={(next) => {
        if (next) {
          setQuery('');
          setActive(0);
        }
        onOpenChange(next);
      }}
    >
      <RadixDialog.Portal>
        <RadixDialog.Overlay className="fixed inset-0 z-40 bg-ink/35" />
        <RadixDialog.Content
          className="fixed top-[12dvh] left-1/2 z-50 flex max-h-[76dvh] w-[min(36rem,calc(100vw-1.5rem))] -translate-x-1/2 flex-col rounded-lg border border-line bg-paper p-4 shadow-raised"
          onCloseAutoFocus={(event) => {
            event.preventDefault();
            onClosed();
          }}
        >
          <RadixDialog.Title className="text-lg font-semibold">Link a claim to its evidence</RadixDialog.Title>
          <RadixDialog.Description className="mt-1 text-sm text-ink-muted">
            {selection.trim()
              ? `“${truncate(selection.trim(), 80)}” becomes a claim linked to the reading or clearance you choose.`
              : 'The name of the reading or clearance you choose goes into the text as a claim; select words first to link those instead.'}{' '}
            Opens with {shortcut}.
          </RadixDialog.Description>
          <label htmlFor={`${listId}-search`} className="mt-3 text-sm font-medium">
            Search readings and clearances
          </label>
          <input
            id={`${listId}-search`}
            role="combobox"
            aria-expanded="true"
            aria-controls={listId}
            aria-autocomplete="list"
            aria-activedescendant={found.length > 0 ? optionId(activeIndex) : undefined}
            value={query}
            onChange={(e) => {
              setQuery(e.target.value);
              setActive(0);
            }}
            onKeyDown={onKeyDown}
            autoComplete="off"
            placeholder="Name or key, e.g. end float"
            className="mt-1 h-10 w-full rounded-md border border-line bg-paper px-3 text-base"
          />
          <div className="mt-3 min-h-0 flex-1 overflow-auto">
            {loading ? (
              <LoadingState label="Loading the build’s readings and clearances…" className="py-4" />
            ) : error ? (
              <ErrorState title="The readings and clearances could not be loaded" error={error} onRetry={onRetry} />
            ) : (targets ?? []).length === 0 ? (
              <p className="rounded-md border border-dashed border-line p-4 text-sm text-ink-muted">
                This build has no readings or clearances yet. Log readings at their moments in the build workspace, then link them here.
              </p>
            ) : found.length === 0 ? (
              <p className="p-2 text-sm text-ink-muted">Nothing matches “{query}”. Try part of the name or the key.</p>
            ) : (
              <ul id={listId} role="listbox" aria-label="Readings and clearances" className="flex flex-col divide-y divide-rule rounded-md border border-rule">
                {found.map((target, i) => (
                  <li
                    key={`${target.kind}:${target.key}`}
                    id={optionId(i)}
                    role="option"
                    aria-selected={i === activeIndex}
                    onMouseMove={() => setActive(i)}
                    onClick={() => onPick(target)}
                    className={cn('cursor-pointer px-3 py-2', i === activeIndex && 'bg-accent-wash')}
                  >
                    <div className="flex flex-wrap items-baseline justify-between gap-x-3">
                      <span className="font-medium">{target.name}</span>
                      <span className="figures text-xs text-ink-muted">
                        {target.kind}:{target.key}
                      </span>
                    </div>
                    <div className="mt-0.5 flex flex-wrap items-center gap-2">
                      <span className="figures text-sm">{target.value}</span>
                      {target.verdict && <VerdictBadge verdict={target.verdict} rule={target.rule} size="sm" />}
                    </div>
                  </li>
                ))}
              </ul>
            )}
          </div>
          <div className="mt-3 flex items-center justify-between gap-2">
            <p className="text-xs text-ink-muted">↑ ↓ to move · Enter to link · Esc to close</p>
            <RadixDialog.Close asChild>
              <Button variant="quiet" size="sm">
                Cancel
              </Button>
            </RadixDialog.Close>
          </div>
        </RadixDialog.Content>
      </RadixDialog.Portal>
    </RadixDialog.Root>
  );
}

function truncate(text: string, max: number): string {
  return text.length > max ? `${text.slice(0, max - 1)}…` : text;
}
