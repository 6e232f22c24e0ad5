import { useQuery } from '@tanstack/react-query';
import { isAnyUnit } from '@shared/measure/quantities';
import type { Reading } from '@shared/readings/reading.schema';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { unitChoiceLabel } from '@/features/instruments/lib/unit-choices';
import { readingQueries } from '../api/reading-queries';
import { enteredFigures, withReadingUnit } from '../lib/reading-text';
import { exactTime } from '@/lib/dates';

/** Fields of a stored snapshot worth showing first, in this order, with their labels. */
const mainFields: [string, string][] = [
  ['name', 'Name'],
  ['key', 'Key'],
  ['kind', 'Kind'],
  ['unit', 'Unit'],
  ['value', 'Value'],
  ['passes', 'Enters'],
  ['stops', 'Does not enter'],
  ['values', 'Values'],
  ['partId', 'Part'],
  ['note', 'Note'],
  ['takenOn', 'Taken on'],
];

function show(value: unknown): string {
  if (value === null || value === undefined || value === '') return '—';
  if (Array.isArray(value)) return value.map(show).join(', ');
  if (typeof value === 'object') return JSON.stringify(value);
  return String(value);
}

/** The figure fields of a snapshot, shown with the snapshot's own unit after them ("64.2 cc"). */
const figureFields: ReadonlySet<string> = new Set(['value', 'passes', 'stops', 'values']);

/** A stored field as a reader says it: figures with their unit, the unit by name ("inches", "pound-force feet (lbf·ft)"). */
function showField(field: string, snapshot: Record<string, unknown>): string {
  const value = snapshot[field];
  const unit = snapshot.unit;
  if (field === 'unit' && isAnyUnit(value)) return unitChoiceLabel(value);
  if (figureFields.has(field) && isAnyUnit(unit) && unit !== '1') {
    if (typeof value === 'string' && value !== '') return withReadingUnit(value, unit);
    if (Array.isArray(value)) return value.map((v) => (typeof v === 'string' ? withReadingUnit(v, unit) : show(v))).join(', ');
  }
  return show(value);
}

const when = exactTime;

/** Earlier states of a reading, newest first: what it was before each edit, and who edited it. */
export function ReadingHistoryDialog({ reading, onClose }: { reading: Reading | null; onClose: () => void }) {
  return (
    <Dialog open={reading !== null} onOpenChange={(open) => !open && onClose()}>
      {reading && (
        <DialogContent
          title={`History of “${reading.name}”`}
          description={`Now version ${reading.lockVersion}: ${enteredFigures(reading)}. Each entry below is the reading as it stood before an edit.`}
          footer={
            <DialogClose asChild>
              <Button>Close</Button>
            </DialogClose>
          }
        >
          <HistoryList reading={reading} />
        </DialogContent>
      )}
    </Dialog>
  );
}

function HistoryList({ reading }: { reading: Reading }) {
  const history = useQuery(readingQueries.history(reading.id));
  const partName = (id: unknown) => (id === reading.partId ? (reading.partName ?? '—') : show(id));
  if (history.isPending) return <LoadingState label="Loading the history…" className="py-3" />;
  if (!history.data) {
    return <ErrorState title="The history could not be loaded" error={history.error} onRetry={() => void history.refetch()} retrying={history.isRefetching} />;
  }
  if (history.data.length === 0) {
    return (
      <EmptyState title="Never edited">
        This reading is as it was first logged by {reading.createdByName}. Each edit keeps the earlier state here.
      </EmptyState>
    );
  }
  return (
    <ol className="flex flex-col gap-3" aria-label="Earlier versions, newest first">
      {history.data.map((rev) => {
        const rest = Object.entries(rev.snapshot).filter(([k]) => !mainFields.some(([f]) => f === k));
        return (
          <li key={rev.lockVersion} className="rounded-md border border-rule p-2">
            <p className="text-sm">
              <span className="font-medium">Version {rev.lockVersion}</span>
              <span className="text-ink-muted">
                {' '}
                · changed by {rev.changedByName} · {when(rev.changedAt)}
              </span>
            </p>
            <dl className="figures mt-1 grid grid-cols-[max-content_minmax(0,1fr)] gap-x-3 text-xs">
              {mainFields
                .filter(([f]) => f in rev.snapshot)
                .map(([f, label]) => (
                  <div key={f} className="contents">
                    <dt className="text-ink-muted">{label}</dt>
                    <dd className="break-words">{f === 'partId' ? partName(rev.snapshot[f]) : showField(f, rev.snapshot)}</dd>
                  </div>
                ))}
            </dl>
            {rest.length > 0 && (
              <details className="mt-1 text-xs">
                <summary className="cursor-pointer text-ink-muted">Every stored field</summary>
                <dl className="figures mt-1 grid grid-cols-[max-content_minmax(0,1fr)] gap-x-3">
                  {rest.map(([k, v]) => (
                    <div key={k} className="contents">
                      <dt className="text-ink-muted">{k}</dt>
                      <dd className="break-words">{show(v)}</dd>
                    </div>
                  ))}
                </dl>
              </details>
            )}
          </li>
        );
      })}
    </ol>
  );
}
