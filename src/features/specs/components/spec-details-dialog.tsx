import { useState, type ReactNode } from 'react';
import { useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { useQueryClient } from '@tanstack/react-query';
import { specPatchSchema, type LibrarySpec, type SpecPatch } from '@shared/specs/spec-library.schema';
import { Button } from '@/components/ui/button';
import { Dialog, DialogClose, DialogContent } from '@/components/ui/dialog';
import { Field, Input } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { useUpdateSpec } from '../api/spec-mutations';
import { specQueries } from '../api/spec-queries';

type DetailsValues = z.input<typeof specPatchSchema>;

const detailPaths: ReadonlySet<string> = new Set(['name', 'appliesTo', 'shared']);

/**
 * Name, what it applies to and sharing (`specPatchSchema`, with the starting `lockVersion`).
 * When someone saved the spec elsewhere meanwhile, says so and offers to load that version.
 */
export function SpecDetailsDialog({ spec, onClose }: { spec: LibrarySpec; onClose: () => void }) {
  const [base, setBase] = useState(spec);
  const [conflict, setConflict] = useState(false);
  const [reloading, setReloading] = useState(false);
  const queryClient = useQueryClient();

  async function reload() {
    setReloading(true);
    try {
      const fresh = await queryClient.fetchQuery({ ...specQueries.detail(base.id), staleTime: 0 });
      setBase(fresh);
      setConflict(false);
    } finally {
      setReloading(false);
    }
  }

  return (
    <Dialog open onOpenChange={(open) => !open && onClose()}>
      <DialogContent title="Edit spec details" description="Name, what it applies to, and whether other builders can use it. Figures change by a new version.">
        <DetailsForm
          key={base.lockVersion}
          spec={base}
          onConflict={() => setConflict(true)}
          onSaved={onClose}
          conflict={
            conflict && (
              <div role="alert" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
                <p className="font-semibold">Saved elsewhere since you opened it</p>
                <p className="mt-0.5">
                  This spec was saved in another tab or on another device after you opened this form, so your changes were not
                  saved. Load the saved version, then make your change again.
                </p>
                <Button size="sm" className="mt-2" onClick={() => void reload()} loading={reloading} loadingText="Loading…">
                  Load the saved version
                </Button>
              </div>
            )
          }
        />
      </DialogContent>
    </Dialog>
  );
}

function DetailsForm({ spec, conflict, onConflict, onSaved }: { spec: LibrarySpec; conflict: ReactNode; onConflict: () => void; onSaved: () => void }) {
  const update = useUpdateSpec(spec.id);
  const { toast } = useToast();
  const form = useForm<DetailsValues, unknown, SpecPatch>({
    resolver: zodResolver(specPatchSchema),
    defaultValues: { name: spec.name, appliesTo: spec.appliesTo, shared: spec.shared, lockVersion: spec.lockVersion },
    mode: 'onTouched',
  });
  const { register, formState, handleSubmit, setError } = form;
  const errors = formState.errors;

  const submit = handleSubmit(async (patch) => {
    try {
      await update.mutateAsync(patch);
      onSaved();
      toast({ tone: 'success', title: 'Spec saved', description: patch.name ?? spec.name });
    } catch (error) {
      if (error instanceof ApiError && error.code === 'edit_conflict') {
        onConflict();
        return;
      }
      const details = error instanceof ApiError ? error.details : [];
      for (const detail of details) {
        if (detail.path && detailPaths.has(detail.path)) setError(detail.path as Path<DetailsValues>, { message: detail.message });
      }
      setError('root.server', { message: errorMessage(error) });
    }
  });

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-4">
      <Field label="Name" required error={errors.name?.message}>
        <Input {...register('name')} autoComplete="off" />
      </Field>
      <Field label="Applies to" error={errors.appliesTo?.message}>
        <Input {...register('appliesTo')} autoComplete="off" />
      </Field>
      <label className="flex items-start gap-2 text-sm">
        <input type="checkbox" {...register('shared')} className="mt-1 size-4 accent-[var(--color-accent)]" />
        <span>
          <span className="font-medium">Shared in the library</span>
          <span className="block text-ink-muted">
            Unsharing hides it from other builders’ searches; clearances already judged against it keep their verdict and its figures.
          </span>
        </span>
      </label>
      {conflict}
      {errors.root?.server && (
        <p role="alert" className="text-sm text-danger">
          Not saved: {errors.root.server.message}
        </p>
      )}
      <div className="flex flex-wrap justify-end gap-2">
        <DialogClose asChild>
          <Button variant="quiet">Cancel</Button>
        </DialogClose>
        <Button type="submit" variant="primary" loading={formState.isSubmitting} loadingText="Saving…">
          Save details
        </Button>
      </div>
    </form>
  );
}
