import { useState } from 'react';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { Button } from '@/components/ui/button';
import { ConfirmDialog, Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { ErrorState, LoadingState } from '@/components/ui/data-states';
import { useToast } from '@/components/ui/toast';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { ApiError, errorMessage } from '@/lib/api';
import { useCreateInstrument, useDeleteInstrument, useLogZeroCheck, useUpdateInstrument } from '../api/instrument-mutations';
import { instrumentQueries } from '../api/instrument-queries';
import { blankInstrumentFor, formValuesFrom } from '../lib/instrument-form';
import { signedWithUnit, withUnit } from '../lib/instrument-format';
import { InstrumentForm } from './instrument-form';
import { ZeroCheckForm } from './zero-check-form';

const cancel = (
  <DialogClose asChild>
    <Button variant="quiet">Cancel</Button>
  </DialogClose>
);

/** Add an instrument to the register. */
export function CreateInstrumentDialog({ open, onOpenChange }: { open: boolean; onOpenChange: (open: boolean) => void }) {
  const create = useCreateInstrument();
  const { toast } = useToast();
  const defaults = useDefaultUnits();
  return (
    <Dialog open={open} onOpenChange={onOpenChange}>
      <DialogContent title="Add an instrument" description="Its resolution and stated uncertainty go into every reading taken with it.">
        <InstrumentForm
          mode="create"
          defaultValues={blankInstrumentFor(defaults)}
          submitLabel="Add instrument"
          pendingLabel="Adding…"
          secondaryAction={cancel}
          onSubmit={async (values) => {
            if (values.mode !== 'create') return;
            const instrument = await create.mutateAsync(values.body);
            onOpenChange(false);
            toast({ tone: 'success', title: 'Instrument added', description: instrument.name });
          }}
        />
      </DialogContent>
    </Dialog>
  );
}

/**
 * Edit an instrument from the version in the list. A save refused because someone saved it
 * elsewhere says so and offers to load that version; nothing is merged behind the builder's back.
 */
export function EditInstrumentDialog({ instrument, onClose }: { instrument: Instrument; onClose: () => void }) {
  const [base, setBase] = useState(instrument);
  const [conflict, setConflict] = useState(false);
  const [reloading, setReloading] = useState(false);
  const [reloadError, setReloadError] = useState<unknown>(null);
  const update = useUpdateInstrument();
  const queryClient = useQueryClient();
  const { toast } = useToast();

  async function reload() {
    setReloading(true);
    setReloadError(null);
    try {
      const fresh = await queryClient.fetchQuery({ ...instrumentQueries.detail(base.id), staleTime: 0 });
      setBase(fresh);
      setConflict(false);
      void queryClient.invalidateQueries({ queryKey: instrumentQueries.all });
    } catch (error) {
      setReloadError(error);
    } finally {
      setReloading(false);
    }
  }

  return (
    <Dialog open onOpenChange={(open) => !open && onClose()}>
      <DialogContent title={`Edit ${base.name}`} description="Changes apply to readings logged from now on; readings already taken keep the figures they were taken with.">
        <InstrumentForm
          // A reloaded version starts the form again from what is stored now.
          key={base.lockVersion}
          mode="edit"
          defaultValues={formValuesFrom(base)}
          submitLabel="Save changes"
          pendingLabel="Saving…"
          secondaryAction={cancel}
          conflict={
            conflict && (
              <div role="alert" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
                <p className="font-semibold">Saved elsewhere since you opened it</p>
                <p className="mt-0.5 text-ink">
                  Someone (you in another tab, or on another device) saved this instrument after you opened this form, so your
                  changes were not saved. Load the saved version, then make your change again.
                </p>
                {reloadError !== null && <p className="mt-1 text-danger">It could not be loaded: {errorMessage(reloadError)}</p>}
                <Button size="sm" className="mt-2" onClick={() => void reload()} loading={reloading} loadingText="Loading…">
                  Load the saved version
                </Button>
              </div>
            )
          }
          onSubmit={async (values) => {
            if (values.mode !== 'edit') return;
            try {
              await update.mutateAsync({ instrumentId: base.id, patch: values.patch });
            } catch (error) {
              if (error instanceof ApiError && error.code === 'edit_conflict') setConflict(true);
              throw error;
            }
            onClose();
            toast({ tone: 'success', title: 'Instrument saved', description: base.name });
          }}
        />
      </DialogContent>
    </Dialog>
  );
}

/** Log what the instrument showed on a setting standard, with its earlier zero checks below. */
export function ZeroCheckDialog({ instrument, onClose }: { instrument: Instrument; onClose: () => void }) {
  const log = useLogZeroCheck(instrument.id);
  const { toast } = useToast();
  return (
    <Dialog open onOpenChange={(open) => !open && onClose()}>
      <DialogContent
        title="Log a zero check"
        description={
          <>
            {instrument.name}
            {instrument.serial && (
              <>
                {' · serial '}
                <span className="figures">{instrument.serial}</span>
              </>
            )}
            {' · reads in steps of '}
            <span className="figures whitespace-nowrap">{withUnit(instrument.resolution, instrument.unit)}</span>
          </>
        }
      >
        <ZeroCheckForm
          instrument={instrument}
          secondaryAction={cancel}
          onSubmit={async (values) => {
            const zeroCheck = await log.mutateAsync(values);
            onClose();
            toast({
              tone: 'success',
              title: 'Zero check logged',
              description: `${instrument.name}: offset ${signedWithUnit(zeroCheck.offset, zeroCheck.unit)} on ${zeroCheck.checkedOn}.`,
            });
          }}
        />
        <EarlierZeroChecks instrument={instrument} />
      </DialogContent>
    </Dialog>
  );
}

function EarlierZeroChecks({ instrument }: { instrument: Instrument }) {
  const checks = useQuery(instrumentQueries.zeroChecks(instrument.id));
  return (
    <section className="mt-5 border-t border-rule pt-3" aria-labelledby={`zero-history-${instrument.id}`}>
      <h3 id={`zero-history-${instrument.id}`} className="text-sm font-semibold">
        Earlier zero checks
      </h3>
      {checks.isPending ? (
        <LoadingState label="Loading zero checks…" className="py-3" />
      ) : !checks.data ? (
        <ErrorState title="Earlier zero checks could not be loaded" error={checks.error} onRetry={() => void checks.refetch()} retrying={checks.isRefetching} className="mt-2" />
      ) : checks.data.length === 0 ? (
        <p className="mt-1 text-sm text-ink-muted">None yet. The first one you log appears here.</p>
      ) : (
        <ol className="mt-1 flex flex-col divide-y divide-rule text-sm">
          {checks.data.slice(0, 6).map((check) => (
            <li key={check.id} className="figures flex flex-wrap justify-between gap-x-3 py-1">
              <time dateTime={check.checkedOn}>{check.checkedOn}</time>
              <span className="text-ink-muted">
                {withUnit(check.shown, check.unit)} on {withUnit(check.standardSize, check.unit)}
              </span>
              <span>{signedWithUnit(check.offset, check.unit)}</span>
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}

/**
 * Delete, and when readings or zero checks use the instrument (409 `instrument_in_use`), offer
 * to retire it instead: retired instruments stay with their readings.
 */
export function DeleteInstrumentDialogs({ instrument, onClose }: { instrument: Instrument; onClose: () => void }) {
  const [inUse, setInUse] = useState<string | null>(null);
  const remove = useDeleteInstrument();
  const update = useUpdateInstrument();
  const { toast } = useToast();

  if (inUse !== null) {
    return (
      <ConfirmDialog
        open
        onOpenChange={(open) => !open && onClose()}
        title={`${instrument.name} is in use`}
        description={`${inUse} Retire it instead: it stays with the readings and zero checks taken with it, and is no longer offered for new readings.`}
        confirmLabel="Retire it"
        pending={update.isPending}
        onConfirm={() =>
          update.mutate(
            { instrumentId: instrument.id, patch: { retired: true, lockVersion: instrument.lockVersion } },
            {
              onSuccess: () => {
                onClose();
                toast({ tone: 'success', title: 'Instrument retired', description: `${instrument.name} is hidden unless you show retired instruments.` });
              },
              onError: (error) => {
                onClose();
                toast({ tone: 'error', title: 'Not retired', description: errorMessage(error) });
              },
            },
          )
        }
      />
    );
  }

  return (
    <ConfirmDialog
      open
      onOpenChange={(open) => !open && onClose()}
      title={`Delete ${instrument.name}?`}
      description="It leaves your register for good. An instrument that readings or zero checks use cannot be deleted; you can retire it instead."
      confirmLabel="Delete instrument"
      confirmVariant="danger"
      pending={remove.isPending}
      onConfirm={() =>
        remove.mutate(instrument.id, {
          onSuccess: () => {
            onClose();
            toast({ tone: 'success', title: 'Instrument deleted', description: instrument.name });
          },
          onError: (error) => {
            if (error instanceof ApiError && error.code === 'instrument_in_use') {
              setInUse(error.message);
              return;
            }
            onClose();
            toast({ tone: 'error', title: 'Not deleted', description: errorMessage(error) });
          },
        })
      }
    />
  );
}
