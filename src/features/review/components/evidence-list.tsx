import { useEffect, useRef, type KeyboardEvent } from 'react';
import type { SheetCheck } from '@shared/review/review-sheet.schema';
import { cn } from '@/lib/cn';
import { evidenceState, evidenceStateWords } from '../lib/review-format';
import { EvidenceStateGlyph } from './evidence-state-badge';
import { PublishedChangeGlyph } from './published-change';

/** One reading or clearance in the list to check. */
export interface EvidenceItem {
  /** `reading:12`, `clearance:3`. */
  id: string;
  kind: 'reading' | 'clearance';
  name: string;
  key: string;
  /** The figure in one line, mono. */
  figure: string;
  /** A second line: instrument, or spec. */
  detail: string;
  check: SheetCheck | null;
  /** A clearance whose verdict or figures differ from the story's current publication: its revision. */
  differsFromRevision?: number | null;
  /** A reading whose figure, said on its clip near the moment, is not the one logged. */
  heardDiffers?: boolean;
}

/** A warning mark before "heard on the clip: another figure". */
function HeardDiffersGlyph() {
  return (
    <svg viewBox="0 0 16 16" className="size-3.5 shrink-0" aria-hidden="true">
      <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
      <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}

const stateTone = {
  unchecked: 'text-ink-muted',
  checked: 'text-ink',
  flagged: 'text-danger',
  changed: 'text-verdict-undecided',
} as const;

/**
 * The story's readings, then its clearances, as one listbox: ↑/↓ (Home/End) move inside it,
 * and the page adds j/k, c and f anywhere outside a text field. Each row shows its state as a
 * shape and a word.
 */
export function EvidenceList({
  items,
  selectedId,
  onSelect,
  label,
}: {
  items: readonly EvidenceItem[];
  selectedId: string | null;
  onSelect: (id: string) => void;
  label: string;
}) {
  const listRef = useRef<HTMLDivElement>(null);
  const optionRefs = useRef(new Map<string, HTMLDivElement>());

  useEffect(() => {
    if (!selectedId) return;
    const option = optionRefs.current.get(selectedId);
    if (!option) return;
    option.scrollIntoView({ block: 'nearest' });
    // Keep keyboard focus on the current row when it was already in the list.
    if (listRef.current?.contains(document.activeElement) && document.activeElement !== option) option.focus();
  }, [selectedId]);

  function onKeyDown(event: KeyboardEvent<HTMLDivElement>) {
    const at = items.findIndex((i) => i.id === selectedId);
    const go = (index: number) => {
      const next = items[Math.max(0, Math.min(items.length - 1, index))];
      if (!next) return;
      event.preventDefault();
      onSelect(next.id);
      optionRefs.current.get(next.id)?.focus();
    };
    if (event.key === 'ArrowDown') go(at + 1);
    else if (event.key === 'ArrowUp') go(at - 1);
    else if (event.key === 'Home') go(0);
    else if (event.key === 'End') go(items.length - 1);
  }

  const groups = (['reading', 'clearance'] as const).map((kind) => ({ kind, rows: items.filter((i) => i.kind === kind) })).filter((g) => g.rows.length > 0);

  return (
    <div ref={listRef} role="listbox" aria-label={label} onKeyDown={onKeyDown} className="flex flex-col gap-3">
      {groups.map((group) => (
        <div key={group.kind} role="group" aria-labelledby={`evidence-group-${group.kind}`} className="flex flex-col">
          <p id={`evidence-group-${group.kind}`} className="mb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">
            {group.kind === 'reading' ? `Readings (${group.rows.length})` : `Clearances (${group.rows.length})`}
          </p>
          <div className="overflow-hidden rounded-md border border-rule">
            {group.rows.map((item) => {
              const state = evidenceState(item.check);
              const selected = item.id === selectedId;
              return (
                <div
                  key={item.id}
                  ref={(el) => {
                    if (el) optionRefs.current.set(item.id, el);
                    else optionRefs.current.delete(item.id);
                  }}
                  role="option"
                  aria-selected={selected}
                  tabIndex={selected || (selectedId === null && item === items[0]) ? 0 : -1}
                  onClick={() => onSelect(item.id)}
                  data-evidence-id={item.id}
                  data-evidence-state={state}
                  className={cn(
                    'grid cursor-pointer grid-cols-[7.5rem_minmax(0,1fr)] items-baseline gap-x-3 border-b border-rule px-3 py-1.5 text-sm last:border-b-0 sm:grid-cols-[8.5rem_minmax(0,1fr)_auto]',
                    'outline-offset-[-2px] hover:bg-paper-2',
                    selected && 'bg-accent-wash shadow-[inset_3px_0_0_var(--color-accent)] hover:bg-accent-wash',
                  )}
                >
                  <span className={cn('inline-flex items-center gap-1.5 text-xs font-medium', stateTone[state])}>
                    <EvidenceStateGlyph state={state} />
                    {evidenceStateWords(state, item.check)}
                  </span>
                  <span className="min-w-0">
                    <span className="font-medium">{item.name}</span> <span className="figures text-2xs text-ink-muted">{item.key}</span>
                    <span className="block truncate text-xs text-ink-muted">{item.detail}</span>
                    {item.differsFromRevision != null && (
                      <span className="mt-0.5 flex items-center gap-1 text-xs font-medium text-verdict-undecided" data-differs-from-revision={item.differsFromRevision}>
                        <PublishedChangeGlyph changed />
                        differs from published revision {item.differsFromRevision}
                      </span>
                    )}
                    {item.heardDiffers && (
                      <span className="mt-0.5 flex items-center gap-1 text-xs font-medium text-danger" data-heard-differs="">
                        <HeardDiffersGlyph />
                        heard on the clip: another figure
                      </span>
                    )}
                  </span>
                  <span className="figures col-start-2 text-xs sm:col-start-3 sm:text-right sm:text-sm">{item.figure}</span>
                </div>
              );
            })}
          </div>
        </div>
      ))}
    </div>
  );
}
