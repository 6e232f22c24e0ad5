import { useMemo, useState } from 'react';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import type { Build } from '@shared/builds/build.schema';
import type { Clearance } from '@shared/clearances/clearance.schema';
import type { Reading } from '@shared/readings/reading.schema';
import type { BuildFlag } from '@shared/review/review.schema';
import { Button } from '@/components/ui/button';
import { DeleteDialog } from '@/components/ui/dialog';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { Panel } from '@/components/ui/panel';
import { useToast } from '@/components/ui/toast';
import { readingQueries } from '@/features/readings/api/reading-queries';
import { WarningIcon } from '@/features/readings/components/reading-badges';
import { reviewQueries } from '@/features/review/api/review-queries';
import { FlagNote } from '@/features/review/components/flag-note';
import { errorMessage } from '@/lib/api';
import { useDeleteClearance } from '../api/clearance-mutations';
import { clearanceQueries } from '../api/clearance-queries';
import { formulaLegend, modelText, specLine } from '../lib/clearance-view';
import { ClearanceForm } from './clearance-form';
import { ClearanceResultView, ClearanceVerdicts, specSourceWords } from './clearance-result-view';

/** The build's results (clearances, material removed…), each worked out from its readings now, and the form to define one. */
export function ClearancesPanel({ build }: { build: Build }) {
  const clearances = useInfiniteQuery(clearanceQueries.list(build.id));
  const readings = useInfiniteQuery(readingQueries.list(build.id));
  const items = useMemo(() => clearances.data?.pages.flatMap((p) => p.items) ?? [], [clearances.data]);
  const readingItems = useMemo(() => readings.data?.pages.flatMap((p) => p.items) ?? [], [readings.data]);
  const [editing, setEditing] = useState<number | 'new' | null>(null);
  const [deleting, setDeleting] = useState<Clearance | null>(null);
  const [refusal, setRefusal] = useState<{ id: number; text: string } | null>(null);
  const remove = useDeleteClearance();
  const flags = useQuery(reviewQueries.buildFlags(build.id));
  const { toast } = useToast();

  return (
    <Panel
      title="Results from readings"
      description="Clearances, material removed and other figures worked out from the readings (a depth less a height, a sum, a formula), each with its uncertainty and, against a spec, a verdict."
      actions={
        editing !== 'new' && (
          <Button size="sm" variant="primary" onClick={() => setEditing('new')}>
            New result
          </Button>
        )
      }
    >
      <div className="flex flex-col gap-4">
        {editing === 'new' && (
          <div className="rounded-md border border-ink p-3">
            <h3 className="mb-3 text-md font-semibold">New result</h3>
            <ClearanceForm build={build} readings={readingItems} onDone={() => setEditing(null)} />
          </div>
        )}
        {refusal && (
          <p role="alert" className="flex items-start gap-1.5 rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm text-danger">
            <WarningIcon />
            <span>{refusal.text}</span>
          </p>
        )}
        {clearances.isPending ? (
          <LoadingState label="Loading the results…" className="py-4" />
        ) : !clearances.data ? (
          <ErrorState
            title="The results could not be loaded"
            error={clearances.error}
            onRetry={() => void clearances.refetch()}
            retrying={clearances.isRefetching}
          />
        ) : items.length === 0 ? (
          editing !== 'new' && (
            <EmptyState
              title="No results yet"
              action={
                <Button variant="primary" onClick={() => setEditing('new')}>
                  Work out a result
                </Button>
              }
            >
              {readingItems.length === 0
                ? 'Log the readings first (say a bore depth and a rotor height), then work out the result (a clearance, material removed…) from them with a template.'
                : 'Choose a template (end float, a feeler gap, a bearing clearance, a compression ratio…) or write a formula, pick the readings for it and attach the spec it must meet.'}
            </EmptyState>
          )
        ) : (
          <>
            <ol className="flex flex-col divide-y divide-rule rounded-md border border-rule" aria-label="Results of this build">
              {items.map((c) =>
                editing === c.id ? (
                  <li key={c.id} className="p-3">
                    <h3 className="mb-3 text-md font-semibold">Edit “{c.name}”</h3>
                    <ClearanceForm build={build} readings={readingItems} clearance={c} onDone={() => setEditing(null)} />
                  </li>
                ) : (
                  <ClearanceItem
                    key={c.id}
                    flags={(flags.data ?? []).filter((f) => f.subjectType === 'clearance' && f.subjectId === c.id)}
                    clearance={c}
                    readings={readingItems}
                    refused={refusal?.id === c.id}
                    onEdit={() => setEditing(c.id)}
                    onDelete={() => setDeleting(c)}
                  />
                ),
              )}
            </ol>
            <LoadMore query={clearances} shown={items.length} what="results" />
          </>
        )}
      </div>
      <DeleteDialog
        target={deleting}
        onClose={() => setDeleting(null)}
        what="result"
        description="Only the result goes; its readings stay. A result a story cites cannot be deleted."
        pending={remove.isPending}
        remove={(id, callbacks) => remove.mutate(id, callbacks)}
        onDeleted={(target) => {
          setRefusal(null);
          toast({ tone: 'success', title: 'Result deleted', description: `“${target.name}” is gone; its readings stay.` });
        }}
        onRefused={(target, e) => setRefusal({ id: target.id, text: `“${target.name}” was not deleted: ${errorMessage(e)}` })}
      />
    </Panel>
  );
}

function ClearanceItem({
  clearance: c,
  flags,
  readings,
  refused,
  onEdit,
  onDelete,
}: {
  clearance: Clearance;
  flags: readonly BuildFlag[];
  readings: readonly Reading[];
  refused: boolean;
  onEdit: () => void;
  onDelete: () => void;
}) {
  const terms = readings.filter((r) => c.terms.some((t) => t.readingId === r.id));
  const legend = formulaLegend(c);
  return (
    <li className={refused ? 'bg-danger-wash/30 px-3 py-2.5' : 'px-3 py-2.5'} data-clearance={c.key}>
      <div className="flex flex-wrap items-start justify-between gap-x-4 gap-y-1">
        <div className="min-w-0">
          <h3 className="text-sm font-semibold">
            {c.name} <span className="figures font-normal text-ink-muted">{c.key}</span>
          </h3>
          <p className="figures text-xs break-words text-ink-muted" data-model="">
            = {modelText(c)}
          </p>
          {legend.length > 0 && (
            <p className="text-xs text-ink-muted" data-formula-legend="">
              where{' '}
              {legend.map((l, i) => (
                <span key={l.name}>
                  {i > 0 && (i === legend.length - 1 ? ' and ' : ', ')}
                  <span className="figures text-ink">{l.name}</span> is {l.meaning}
                </span>
              ))}
            </p>
          )}
        </div>
        <div className="flex gap-0.5" role="group" aria-label={`Actions for ${c.name}`}>
          <Button size="sm" variant="quiet" className="h-7 px-2" onClick={onEdit} aria-label={`Edit ${c.name}`}>
            Edit
          </Button>
          <Button size="sm" variant="quiet" className="h-7 px-2 text-danger hover:text-danger" onClick={onDelete} aria-label={`Delete ${c.name}`}>
            Delete
          </Button>
        </div>
      </div>
      {c.result ? (
        <div className="mt-1 flex flex-wrap items-center gap-x-4 gap-y-1">
          <span className="figures text-sm font-medium">{c.result.display}</span>
          <ClearanceVerdicts result={c.result} size="sm" />
        </div>
      ) : (
        <div role="status" className="mt-1 flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>Cannot be worked out: {c.problems.join('; ') || 'no reason given'}</span>
        </div>
      )}
      <p className="mt-1 text-xs text-ink-muted">
        {c.spec ? (
          <>
            Spec: <span className="text-ink">{specLine(c.spec)}</span> · {specSourceWords[c.spec.sourceKind] ?? c.spec.sourceKind}: {c.spec.sourceText}
            {c.spec.newerVersion !== null && (
              <span className="ml-1 text-verdict-undecided">· newer spec version available (v{c.spec.newerVersion}); edit to use it</span>
            )}
          </>
        ) : (
          'No spec attached: worked out, not judged.'
        )}
      </p>
      {flags.map((flag) => (
        <FlagNote key={flag.id} flag={flag} className="mt-2" />
      ))}
      {c.result && (
        <details className="mt-1.5">
          <summary className="cursor-pointer text-xs text-accent">Band picture and working</summary>
          <div className="mt-2">
            <ClearanceResultView result={c.result} readings={terms} />
          </div>
        </details>
      )}
    </li>
  );
}
