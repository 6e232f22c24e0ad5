import { useState } from 'react';
import { useInfiniteQuery } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router-dom';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { requireArea } from '@/features/auth/lib/require-role';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { LoadMore } from '@/components/ui/load-more';
import { PageHeader } from '@/components/ui/page-header';
import { queryClient } from '@/lib/query-client';
import { instrumentQueries } from '../api/instrument-queries';
import { CreateInstrumentDialog, DeleteInstrumentDialogs, EditInstrumentDialog, ZeroCheckDialog } from '../components/instrument-dialogs';
import { InstrumentCards, InstrumentsTable, type InstrumentActions } from '../components/instruments-table';

export async function loader({ request }: LoaderFunctionArgs) {
  await requireArea('instruments', request);
  // prefetch, not ensure: a failing list shows its own error and retry inside the page.
  await queryClient.prefetchInfiniteQuery(instrumentQueries.list());
  return null;
}

type Open = { kind: 'create' } | { kind: 'edit' | 'zero' | 'delete'; instrument: Instrument } | null;

/** The builder's instruments: resolution, uncertainty, calibration and zero checks. */
export function Component() {
  const [open, setOpen] = useState<Open>(null);
  const close = () => setOpen(null);
  const actions: InstrumentActions = {
    onEdit: (instrument) => setOpen({ kind: 'edit', instrument }),
    onZeroCheck: (instrument) => setOpen({ kind: 'zero', instrument }),
    onDelete: (instrument) => setOpen({ kind: 'delete', instrument }),
  };

  return (
    <>
      <PageHeader
        title="Instruments"
        description="Every instrument you measure with. Its resolution, or the uncertainty you state for it, goes into each reading taken with it; its calibration date decides whether those readings carry a warning."
        actions={
          <Button variant="primary" onClick={() => setOpen({ kind: 'create' })}>
            Add an instrument
          </Button>
        }
      />
      <InstrumentsList actions={actions} onAdd={() => setOpen({ kind: 'create' })} />

      <CreateInstrumentDialog open={open?.kind === 'create'} onOpenChange={(next) => !next && close()} />
      {open?.kind === 'edit' && <EditInstrumentDialog key={open.instrument.id} instrument={open.instrument} onClose={close} />}
      {open?.kind === 'zero' && <ZeroCheckDialog key={open.instrument.id} instrument={open.instrument} onClose={close} />}
      {open?.kind === 'delete' && <DeleteInstrumentDialogs key={open.instrument.id} instrument={open.instrument} onClose={close} />}
    </>
  );
}

function InstrumentsList({ actions, onAdd }: { actions: InstrumentActions; onAdd: () => void }) {
  const list = useInfiniteQuery(instrumentQueries.list());
  const [showRetired, setShowRetired] = useState(false);

  if (list.isPending) return <LoadingState label="Loading your instruments…" />;
  if (!list.data) {
    return (
      <ErrorState title="Your instruments could not be loaded" error={list.error} onRetry={() => void list.refetch()} retrying={list.isRefetching} />
    );
  }

  const all = list.data.pages.flatMap((page) => page.items);
  if (all.length === 0) {
    return (
      <EmptyState
        title="No instruments yet"
        action={
          <Button variant="primary" onClick={onAdd}>
            Add your first instrument
          </Button>
        }
      >
        Add each micrometer, bore gauge, caliper and blade set you measure with, and the burette, degree wheel, torque
        wrench or gauge you read other figures from: its unit, its resolution, a stated
        uncertainty if its certificate gives one, and when it was last calibrated. Readings are logged against an
        instrument.
      </EmptyState>
    );
  }

  const retiredCount = all.filter((i) => i.retired).length;
  const shown = showRetired ? all : all.filter((i) => !i.retired);
  const overdue = all.filter((i) => !i.retired && i.calibrationState === 'overdue');

  return (
    <div className="flex flex-col gap-3">
      {overdue.length > 0 && (
        <div role="status" className="flex items-start gap-2 rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
          <svg viewBox="0 0 16 16" className="mt-0.5 size-4 shrink-0 text-danger" aria-hidden="true">
            <path d="M8 1.6 15 14.2H1z" fill="currentColor" />
            <path d="M8 6v4M8 11.7v.7" stroke="var(--color-paper)" strokeWidth="1.6" strokeLinecap="round" />
          </svg>
          <p>
            <span className="font-semibold">
              {overdue.length === 1 ? '1 instrument is' : `${overdue.length} instruments are`} past the calibration due date:
            </span>{' '}
            {overdue.map((i, n) => (
              <span key={i.id}>
                {n > 0 && '; '}
                {i.name} (due <span className="figures whitespace-nowrap">{i.calibrationDueOn}</span>)
              </span>
            ))}
            . Readings taken with an instrument after its due date carry a calibration warning until it is calibrated again.
          </p>
        </div>
      )}

      <div className="flex flex-wrap items-center justify-between gap-3" data-print="hide">
        <label className="flex items-center gap-2 text-sm">
          <input
            type="checkbox"
            checked={showRetired}
            onChange={(event) => setShowRetired(event.target.checked)}
            className="size-4 accent-[var(--color-accent)]"
          />
          Show retired instruments ({retiredCount})
        </label>
      </div>

      {shown.length === 0 ? (
        <EmptyState
          title="Every instrument here is retired"
          action={
            <>
              <Button onClick={() => setShowRetired(true)}>Show retired instruments</Button>
              <Button variant="primary" onClick={onAdd}>
                Add an instrument
              </Button>
            </>
          }
        >
          Retired instruments stay with the readings taken with them. Add the instruments you use now.
        </EmptyState>
      ) : (
        <>
          <div className="hidden md:block">
            <InstrumentsTable instruments={shown} actions={actions} />
          </div>
          <div className="md:hidden">
            <InstrumentCards instruments={shown} actions={actions} />
          </div>
        </>
      )}
      <LoadMore query={list} shown={shown.length} what="instruments" />
    </div>
  );
}
