import { useId, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import type { Build } from '@shared/builds/build.schema';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { readingPatchSchema, type Reading, type ReadingPatch } from '@shared/readings/reading.schema';
import { normaliseReadingFigures } from '@shared/readings/reading-figures';
import { readingKindLabels } from '@shared/readings/reading-words';
import { Button } from '@/components/ui/button';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { ApiError, errorMessage } from '@/lib/api';
import { EDIT_CONFLICT, useUpdateReading } from '../api/reading-mutations';
import { readingQueries } from '../api/reading-queries';
import { enteredFigures, splitValues, withReadingUnit } from '../lib/reading-text';
import { WarningIcon } from './reading-badges';

interface Draft {
  name: string;
  value: string;
  passes: string;
  stops: string;
  values: string;
  partId: string;
  note: string;
}

function typed(reading: Reading, field: string): string | null {
  const v = reading.entered[field];
  return typeof v === 'string' ? v : null;
}

/** The boxes start from what was typed (its unit included), so saving unchanged changes nothing. */
function draftOf(reading: Reading): Draft {
  const inUnit = (text: string) => withReadingUnit(text, reading.unit);
  const entered = reading.entered.values;
  return {
    name: reading.name,
    value: typed(reading, 'value') ?? (reading.value ? inUnit(reading.value) : ''),
    passes: typed(reading, 'passes') ?? (reading.passes ? inUnit(reading.passes) : ''),
    stops: typed(reading, 'stops') ?? (reading.stops ? inUnit(reading.stops) : ''),
    values: Array.isArray(entered) ? entered.join('; ') : (reading.values ?? []).map(inUnit).join('; '),
    partId: reading.partId === null ? '' : String(reading.partId),
    note: reading.note,
  };
}

type Errors = Partial<Record<keyof Draft | 'root', string>>;

/** What changed, as a PATCH body from `lockVersion`; figures go with their kind so the server checks them whole. */
function patchOf(reading: Reading, start: Draft, draft: Draft, lockVersion: number): ReadingPatch {
  const patch: ReadingPatch = { lockVersion };
  if (draft.name !== start.name) patch.name = draft.name;
  if (draft.note !== start.note) patch.note = draft.note;
  if (draft.partId !== start.partId) patch.partId = draft.partId ? Number(draft.partId) : null;
  const figuresChanged =
    reading.kind === 'direct'
      ? draft.value !== start.value
      : reading.kind === 'bracket'
        ? draft.passes !== start.passes || draft.stops !== start.stops
        : draft.values !== start.values;
  if (figuresChanged) {
    patch.kind = reading.kind;
    patch.unit = reading.unit;
    if (reading.kind === 'direct') patch.value = draft.value;
    if (reading.kind === 'bracket') Object.assign(patch, { passes: draft.passes, stops: draft.stops });
    if (reading.kind === 'repeated') patch.values = splitValues(draft.values);
  }
  return patch;
}

function fieldOf(path: string): keyof Draft | 'root' {
  if (path.startsWith('values')) return 'values';
  if (path === 'key') return 'name';
  return (['name', 'value', 'passes', 'stops', 'partId', 'note'] as const).find((f) => f === path) ?? 'root';
}

/** The same checks the server runs: the patch schema, then the figures against the instrument. */
function check(reading: Reading, patch: ReadingPatch, instrument: Instrument | undefined): Errors {
  const errors: Errors = {};
  const parsed = readingPatchSchema.safeParse(patch);
  if (!parsed.success) for (const issue of parsed.error.issues) errors[fieldOf(issue.path.map(String).join('.'))] ??= issue.message;
  if (patch.kind && instrument) {
    const figures = normaliseReadingFigures(
      { kind: reading.kind, unit: reading.unit, value: patch.value, passes: patch.passes, stops: patch.stops, values: patch.values },
      instrument,
    );
    if (!figures.ok) for (const problem of figures.problems) errors[fieldOf(problem.path)] ??= problem.message;
  }
  return errors;
}

/**
 * A reading's name, figures, part and note edited in its table row. Saves from the version it
 * opened at; a save made elsewhere since is refused (409) and offered to reload, the typed text kept.
 */
export function ReadingEditor({
  build,
  reading,
  instruments,
  onDone,
}: {
  build: Build;
  reading: Reading;
  instruments: readonly Instrument[];
  onDone: () => void;
}) {
  const [start, setStart] = useState(() => draftOf(reading));
  const [draft, setDraft] = useState(start);
  const [lockVersion, setLockVersion] = useState(reading.lockVersion);
  const [errors, setErrors] = useState<Errors>({});
  const [conflict, setConflict] = useState<'stale' | 'reloaded' | null>(null);
  const [reloading, setReloading] = useState(false);
  const update = useUpdateReading();
  const queryClient = useQueryClient();
  const { toast } = useToast();
  const id = useId();
  const instrument = instruments.find((i) => i.id === reading.instrumentId);
  const set = (field: keyof Draft) => (event: { target: { value: string } }) => setDraft((d) => ({ ...d, [field]: event.target.value }));

  function save() {
    const patch = patchOf(reading, start, draft, lockVersion);
    const found = check(reading, patch, instrument);
    setErrors(found);
    if (Object.keys(found).length > 0) return;
    if (Object.keys(patch).length === 1) return onDone();
    update.mutate(
      { readingId: reading.id, patch },
      {
        onSuccess: (saved) => {
          toast({ tone: 'success', title: 'Reading saved', description: `${saved.name}: ${saved.result.display}` });
          onDone();
        },
        onError: (error) => {
          if (error instanceof ApiError && error.code === EDIT_CONFLICT) {
            setConflict('stale');
            return;
          }
          const next: Errors = {};
          if (error instanceof ApiError) for (const d of error.details) if (d.path) next[fieldOf(d.path)] ??= d.message;
          next.root = `Not saved: ${errorMessage(error)}`;
          setErrors(next);
        },
      },
    );
  }

  async function reload() {
    setReloading(true);
    try {
      await queryClient.refetchQueries({ queryKey: readingQueries.list(build.id).queryKey });
      const pages = queryClient.getQueryData(readingQueries.list(build.id).queryKey)?.pages ?? [];
      const fresh = pages.flatMap((p) => p.items).find((r) => r.id === reading.id);
      if (!fresh) {
        setErrors({ root: 'This reading was deleted elsewhere. Cancel to close the editor.' });
        setConflict(null);
        return;
      }
      // The boxes keep what was typed; the comparison base and version become the stored ones.
      setStart(draftOf(fresh));
      setLockVersion(fresh.lockVersion);
      setConflict('reloaded');
    } catch (error) {
      setErrors({ root: `Could not reload: ${errorMessage(error)}` });
    } finally {
      setReloading(false);
    }
  }

  const box = 'figures h-8! text-sm';
  return (
    <form
      noValidate
      aria-label={`Edit ${reading.name}`}
      className="flex flex-col gap-2"
      onSubmit={(event) => {
        event.preventDefault();
        save();
      }}
      onKeyDown={(event) => {
        if (event.key === 'Escape') onDone();
      }}
    >
      <p className="text-xs text-ink-muted">
        Editing <span className="font-medium text-ink">{reading.name}</span> ({readingKindLabels[reading.kind].toLowerCase()}, with{' '}
        {reading.instrumentName}); now <span className="figures">{enteredFigures(reading)}</span>. Escape cancels.
      </p>
      <div className="grid gap-2 sm:grid-cols-2 lg:grid-cols-[minmax(0,14rem)_minmax(0,16rem)_minmax(0,12rem)_minmax(0,1fr)]">
        <Field label="Name" error={errors.name}>
          <Input value={draft.name} onChange={set('name')} className="h-8! text-sm" autoFocus />
        </Field>
        {reading.kind === 'direct' && (
          <Field label="Value as shown" error={errors.value}>
            <Input value={draft.value} onChange={set('value')} className={box} inputMode="decimal" />
          </Field>
        )}
        {reading.kind === 'bracket' && (
          <div className="grid grid-cols-2 gap-2">
            <Field label="Enters" error={errors.passes}>
              <Input value={draft.passes} onChange={set('passes')} className={box} inputMode="decimal" />
            </Field>
            <Field label="Does not" error={errors.stops}>
              <Input value={draft.stops} onChange={set('stops')} className={box} inputMode="decimal" />
            </Field>
          </div>
        )}
        {reading.kind === 'repeated' && (
          <Field label="Values" hint="separated by ; or a new line" error={errors.values}>
            <Input value={draft.values} onChange={set('values')} className={box} />
          </Field>
        )}
        <Field label="Part" error={errors.partId}>
          <Select size="sm" value={draft.partId} onChange={set('partId')}>
            <option value="">Not tied to a part</option>
            {build.parts.map((p) => (
              <option key={p.id} value={p.id}>
                {p.name}
                {p.serial ? ` · ${p.serial}` : ''}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Note" error={errors.note}>
          <Textarea value={draft.note} onChange={set('note')} rows={1} className="min-h-8 py-1 text-sm" />
        </Field>
      </div>
      {conflict === 'stale' && (
        <div role="alert" id={`${id}-conflict`} className="flex flex-wrap items-center gap-2 rounded-md border border-verdict-undecided/50 bg-paper px-3 py-2 text-sm">
          <WarningIcon className="text-verdict-undecided" />
          <span className="font-medium">Saved elsewhere since you opened it.</span>
          <span className="text-ink-muted">Your change was not saved. Reload to see that version; what you typed stays in the boxes.</span>
          <Button size="sm" onClick={() => void reload()} loading={reloading} loadingText="Reloading…">
            Reload
          </Button>
        </div>
      )}
      {conflict === 'reloaded' && (
        <p role="status" className="text-sm text-ink-muted">
          Reloaded the version saved elsewhere (now <span className="figures">{enteredFigures(reading)}</span>). Your typed text is
          still in the boxes: Save puts it over that version, Cancel keeps that version.
        </p>
      )}
      {errors.root && (
        <p role="alert" className="flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>{errors.root}</span>
        </p>
      )}
      <div className="flex gap-2">
        <Button type="submit" size="sm" variant="primary" loading={update.isPending} loadingText="Saving…">
          Save
        </Button>
        <Button size="sm" variant="quiet" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
