import { useQuery } from '@tanstack/react-query';
import type { Reading } from '@shared/readings/reading.schema';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { readingQueries } from '../api/reading-queries';
import { enteredFigures } from '../lib/reading-text';

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

function when(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : d.toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' });
}

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
                    <dd className="break-words">{f === 'partId' ? partName(rev.snapshot[f]) : show(rev.snapshot[f])}</dd>
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
