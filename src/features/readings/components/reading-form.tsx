import { useEffect, useId, useMemo, useRef, useState, type ReactNode } from 'react';
import { useController, useFieldArray, useForm, useWatch, type Path } from 'react-hook-form';
import { useInfiniteQuery, useQuery } from '@tanstack/react-query';
import { Link } from 'react-router-dom';
import type { Build } from '@shared/builds/build.schema';
import type { Clip, Moment } from '@shared/clips/clip.schema';
import { calibrationDueOn, calibrationStateOn, instrumentKindNames, zeroCheckedKinds, type Instrument, type InstrumentKind } from '@shared/instruments/instrument.schema';
import { readingSchema as engineReadingSchema } from '@shared/measure/calc.schema';
import { decimalsForStep, formatUncertaintyIn, formatValue } from '@shared/measure/format-quantity';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';
import { evaluateReading } from '@shared/measure/readings';
import { quantityOf, unitTable } from '@shared/measure/quantities';
import { figureExamples } from '@shared/measure/quantity-text';
import type { ReadingUnit } from '@shared/measure/record-units';
import { materialExpansion, materialNames } from '@shared/measure/thermal';
import { keyFromName, MAX_ENTERED_REPEATS, suggestKey, type Reading, type ReadingKind } from '@shared/readings/reading.schema';
import { normaliseReadingFigures, toEngineReading } from '@shared/readings/reading-figures';
import { readingKindLabels } from '@shared/readings/reading-words';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { useCreateMoment, useDeleteMoment, useUpdateMoment } from '@/features/clips/api/clip-mutations';
import { clipQueries } from '@/features/clips/api/clip-queries';
import type { LogReadingAt } from '@/features/clips/components/clip-player';
import { confidenceWord, type HeardFigures } from '@/features/clips/lib/heard';
import { nudgedAtMs } from '@/features/clips/components/moments-list';
import { formatTime, frameDuration, frameIndexAt } from '@/features/clips/lib/clip-format';
import { ApiError, errorMessage } from '@/lib/api';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { UnitOptions } from '@/features/instruments/components/unit-options';
import { usePlayerShortcuts } from '@/features/clips/lib/player-shortcuts';
import { cn } from '@/lib/cn';
import { useCreateReading } from '../api/reading-mutations';
import { readingInstrumentsQuery, readingQueries } from '../api/reading-queries';
import {
  blankReadingForm,
  defaultKindFor,
  instrumentForHeard,
  withHeardFigures,
  figuresOf,
  formPathOf,
  kindsFor,
  readClipChoices,
  readingFormResolver,
  readsLength,
  startingChoices,
  temperatureOf,
  toReadingInput,
  unitAfterChoosing,
  writeClipChoices,
  type ReadingFormValues,
} from '../lib/reading-form';
import { withReadingUnit } from '../lib/reading-text';
import { CalibrationBadge, instrumentOptionText, WarningIcon } from './reading-badges';
import { ReadingBudget } from './reading-budget';

export interface ReadingFormProps {
  build: Build;
  clip: Clip;
  /** Where it opened: the player's time, and the moment there if one was marked. */
  at: LogReadingAt;
  /** Moves the player to a time (ms), so it shows what the still shows. */
  onSeek: (atMs: number) => void;
  onSaved: (reading: Reading) => void;
  onClose: () => void;
}

/** A kind of instrument in a sentence: "torque wrench or gauge", "burette" (the register's name without its aside). */
function kindWords(kind: InstrumentKind): string {
  return instrumentKindNames[kind].replace(/\s*\(.*\)$/, '').toLowerCase();
}

/** What each way of reading means with this kind of instrument: with feeler blades, one indication is a single blade. */
function kindHint(kind: ReadingKind, instrument: Instrument | undefined): string {
  const instrumentKind: InstrumentKind | undefined = instrument?.kind;
  if (kind === 'direct') {
    if (instrumentKind === 'feeler-blades') return 'a single blade that enters with a light drag';
    if (instrument && !readsLength(instrument)) {
      return instrumentKind === 'other' ? 'the figure it shows' : `the figure the ${kindWords(instrument.kind)} shows`;
    }
    return 'micrometer, depth micrometer, bore gauge';
  }
  if (kind === 'bracket') return 'the blade that enters and the one that does not';
  return `the same ${readsLength(instrument) ? 'size' : 'figure'} read several times; the mean is used`;
}

function secondsText(atMs: number): string {
  return (atMs / 1000).toFixed(3);
}

/** The message the server gave for `path`, if its refusal named that field. */
function detailFor(error: unknown, path: string): string | null {
  return error instanceof ApiError ? (error.details.find((d) => d.path === path)?.message ?? null) : null;
}

/**
 * The compact form beside the player: the moment (marked on opening if there was none, nudged a
 * frame at a time, the still following), the instrument with its calibration and zero check, the
 * part, and the figures as shown, read back live by the same code the server checks them with.
 */
export function ReadingForm({ build, clip, at, onSeek, onSaved, onClose }: ReadingFormProps) {
  const [shortcuts] = usePlayerShortcuts();
  const instruments = useQuery(readingInstrumentsQuery);
  const usable = useMemo(() => (instruments.data ?? []).filter((i) => !i.retired), [instruments.data]);
  const headingId = useId();

  return (
    <section aria-labelledby={headingId} className="flex flex-col gap-3 rounded-lg border border-ink bg-paper p-3" data-reading-form="">
      <header className="flex items-start justify-between gap-2">
        <div>
          <h2 id={headingId} className="text-md font-semibold">
            Log a reading
          </h2>
          <p className="text-xs text-ink-muted">
            In <span className="font-medium text-ink">{clip.title}</span>.{' '}
            {shortcuts.enabled
              ? `Press ${shortcuts.reading.toUpperCase()} in the player to start another at the current time.`
              : 'Press “Log a reading” in the player to start another at the current time.'}
          </p>
        </div>
        <Button size="sm" variant="quiet" onClick={onClose} aria-label="Close the reading form">
          ✕
        </Button>
      </header>
      {at.heard && <HeardNotice heard={at.heard} atMs={at.atMs} />}
      <MomentPicker clip={clip} at={at} onSeek={onSeek} onCancelled={onClose}>
        {(momentId, cancel, moment, pending) =>
          instruments.isPending ? (
            <LoadingState label="Loading your instruments…" className="py-3" />
          ) : !instruments.data ? (
            <ErrorState
              title="Your instruments could not be loaded"
              error={instruments.error}
              whatToDo="A reading needs the instrument it was taken with. Try again; the moment stays marked."
              onRetry={() => void instruments.refetch()}
              retrying={instruments.isRefetching}
            />
          ) : usable.length === 0 ? (
            <EmptyState title="No instruments to log with" action={<Link to="/instruments">Open the instruments register</Link>}>
              Add the instrument you measured with (its unit and resolution, and when it was last calibrated) to your register, then
              come back to this moment: it stays marked.
            </EmptyState>
          ) : (
            <ReadingFields
              build={build}
              clipId={clip.id}
              instruments={usable}
              momentId={momentId}
              momentLabel={moment?.label ?? ''}
              pendingMoment={pending}
              heard={at.heard}
              onSaved={onSaved}
              onCancel={cancel}
            />
          )
        }
      </MomentPicker>
    </section>
  );
}

/** What was heard, above the form it filled in: the form's figures are a proposal until saved. */
function HeardNotice({ heard, atMs }: { heard: HeardFigures; atMs: number }) {
  return (
    <p className="rounded-md border border-accent/40 bg-accent-wash/50 px-2 py-1.5 text-xs text-ink" data-heard-filled="">
      Filled in from what was heard at <span className="figures">{formatTime(atMs / 1000)}</span>: “{heard.words}” ({confidenceWord(heard.confidence)}).
      Check the figures against the footage; nothing is saved until you save the reading.
    </p>
  );
}

/**
 * A moment still to be marked: the time chosen, marked only when the reading is saved (a form
 * filled in from what was heard stores nothing before that). `mark` marks it; `unmark` takes it
 * back when the reading is then refused.
 */
export interface PendingMoment {
  atMs: number;
  mark: () => Promise<Moment>;
  unmark: (moment: Moment) => void;
}

/**
 * The moment the reading belongs to: marks one at the opening time when none was given (or, for a
 * form filled in from what was heard, holds the time and marks it when the reading is saved),
 * shows its evidence still, and moves it (typed time or ±1 frame). Cancel takes back a moment it marked.
 */
function MomentPicker({
  clip,
  at,
  onSeek,
  onCancelled,
  children,
}: {
  clip: Clip;
  at: LogReadingAt;
  onSeek: (atMs: number) => void;
  onCancelled: () => void;
  children: (momentId: number | null, cancel: () => void, moment: Moment | null, pending: PendingMoment | null) => ReactNode;
}) {
  const moments = useQuery(clipQueries.moments(clip.id));
  const create = useCreateMoment(clip.id);
  const update = useUpdateMoment(clip.id);
  const remove = useDeleteMoment(clip.id);
  const { toast } = useToast();
  const [momentId, setMomentId] = useState<number | null>(at.momentId);
  const [markedHere, setMarkedHere] = useState(false);
  // Accepted from what was heard with no moment on that frame: the time waits for the save.
  const [pendingAtMs, setPendingAtMs] = useState<number | null>(at.heard && at.momentId === null ? at.atMs : null);
  const [timeText, setTimeText] = useState(secondsText(at.atMs));
  const [error, setError] = useState<string | null>(null);
  const started = useRef(false);
  const timeId = useId();
  const fps = clip.probe?.frameRate ?? 1 / frameDuration(clip);
  const durationMs = clip.probe ? Math.round(clip.probe.durationS * 1000) : null;
  const moment = moments.data?.find((m) => m.id === momentId) ?? null;
  const busy = create.isPending || update.isPending;

  function checkTime(atMs: number): string | null {
    if (durationMs !== null && atMs > durationMs) {
      return `That is after the end of the clip (${(durationMs / 1000).toFixed(3)} s). Enter a time from 0 to ${(durationMs / 1000).toFixed(3)} s.`;
    }
    return null;
  }

  function refused(e: unknown, what: string) {
    setError(detailFor(e, 'atMs') ? `${what}: ${detailFor(e, 'atMs')}. ${errorMessage(e)}` : `${what}: ${errorMessage(e)}`);
  }

  function markAt(atMs: number) {
    const problem = checkTime(atMs);
    if (problem) return setError(problem);
    setError(null);
    create.mutate(
      { atMs, label: '' },
      {
        onSuccess: (m) => {
          setMomentId(m.id);
          setMarkedHere(true);
          setTimeText(secondsText(m.atMs));
          onSeek(m.atMs);
        },
        onError: (e) => refused(e, 'The moment was not marked'),
      },
    );
  }

  function moveTo(atMs: number) {
    if (!moment && pendingAtMs !== null) {
      const problem = checkTime(atMs);
      if (problem) return setError(problem);
      setError(null);
      setPendingAtMs(atMs);
      setTimeText(secondsText(atMs));
      onSeek(atMs);
      return;
    }
    if (!moment) return markAt(atMs);
    const problem = checkTime(atMs);
    if (problem) return setError(problem);
    setError(null);
    update.mutate(
      { momentId: moment.id, patch: { atMs } },
      {
        onSuccess: (m) => {
          setTimeText(secondsText(m.atMs));
          onSeek(m.atMs);
        },
        onError: (e) => refused(e, 'The moment was not moved'),
      },
    );
  }

  useEffect(() => {
    if (started.current || at.momentId !== null || pendingAtMs !== null) return;
    started.current = true;
    markAt(at.atMs);
    // Only on opening (the ref keeps it to once); later marks come from the buttons.
  });

  function submitTime() {
    const text = timeText.trim().replace(',', '.');
    const seconds = Number(text);
    if (!text || !Number.isFinite(seconds) || seconds < 0) {
      setError('Enter the time in seconds from the start of the clip, e.g. 1.533.');
      return;
    }
    moveTo(Math.round(seconds * 1000));
  }

  const pending: PendingMoment | null =
    !moment && pendingAtMs !== null
      ? {
          atMs: pendingAtMs,
          mark: () => create.mutateAsync({ atMs: pendingAtMs, label: '' }),
          unmark: (m) =>
            remove.mutate(m.id, {
              onError: (e) => toast({ tone: 'error', title: 'A moment stays marked', description: `${errorMessage(e)} The reading was not saved; delete the moment from the moments list if you do not need it.` }),
            }),
        }
      : null;
  const nudgeFrom = moment?.atMs ?? pendingAtMs;

  function cancel() {
    if (markedHere && moment) {
      remove.mutate(moment.id, {
        onError: (e) => toast({ tone: 'error', title: 'The moment stays marked', description: `${errorMessage(e)} Delete it from the moments list if you do not need it.` }),
      });
    }
    onCancelled();
  }

  const seconds = (moment?.atMs ?? pendingAtMs ?? at.atMs) / 1000;
  return (
    <>
      <div className="flex flex-col gap-2 rounded-md border border-rule bg-paper-2/50 p-2">
        <div className="relative aspect-video w-full overflow-hidden rounded-sm border border-rule bg-paper-3">
          {moment ? (
            <img src={moment.frameUrl} alt={`Evidence still at ${formatTime(seconds)}, frame ${frameIndexAt(seconds, fps) + 1}`} className="size-full object-contain" />
          ) : pendingAtMs !== null ? (
            <p className="p-3 text-xs text-ink-muted">
              The player shows this time. The moment and its evidence still are made when you save the reading.
            </p>
          ) : (
            <p className="p-3 text-xs text-ink-muted">{busy ? 'Marking the moment…' : 'No moment marked yet.'}</p>
          )}
        </div>
        <form
          noValidate
          className="flex flex-wrap items-end gap-1.5"
          onSubmit={(event) => {
            event.preventDefault();
            submitTime();
          }}
        >
          <div className="flex min-w-0 flex-1 flex-col gap-1">
            <label htmlFor={timeId} className="text-sm font-medium">
              Moment at <span className="font-normal text-ink-muted">(seconds)</span>
            </label>
            <Input
              id={timeId}
              value={timeText}
              inputMode="decimal"
              onChange={(event) => setTimeText(event.target.value)}
              aria-invalid={error ? true : undefined}
              aria-describedby={error ? `${timeId}-error` : `${timeId}-hint`}
              className="figures h-8! text-sm"
            />
          </div>
          <Button type="submit" size="sm" loading={busy} loadingText="Saving…">
            {moment || pendingAtMs !== null ? 'Move' : 'Mark'}
          </Button>
          <Button size="sm" variant="quiet" className="px-2" disabled={nudgeFrom === null || busy} onClick={() => nudgeFrom !== null && moveTo(nudgedAtMs(nudgeFrom, -1, fps, durationMs ?? Infinity))} aria-label="Nudge the moment one frame earlier">
            −1 f
          </Button>
          <Button size="sm" variant="quiet" className="px-2" disabled={nudgeFrom === null || busy} onClick={() => nudgeFrom !== null && moveTo(nudgedAtMs(nudgeFrom, 1, fps, durationMs ?? Infinity))} aria-label="Nudge the moment one frame later">
            +1 f
          </Button>
        </form>
        {error ? (
          <p id={`${timeId}-error`} role="alert" className="flex items-start gap-1.5 text-sm text-danger">
            <WarningIcon />
            <span>{error}</span>
          </p>
        ) : (
          <p id={`${timeId}-hint`} className="figures text-xs text-ink-muted">
            {moment || pendingAtMs !== null ? `${formatTime(seconds)} · frame ${frameIndexAt(seconds, fps) + 1}` : 'The moment is marked when the form opens.'}
            {moment && markedHere && ' · marked for this reading (Cancel takes it back)'}
            {!moment && pendingAtMs !== null && ' · marked when you save the reading'}
          </p>
        )}
      </div>
      {children(moment?.id ?? null, cancel, moment, pending)}
    </>
  );
}

/** What the builder chose by hand in this form; those choices are never overwritten. */
interface ChosenByHand {
  instrument: boolean;
  part: boolean;
  name: boolean;
  /** The unit of figures typed without one, when another of the instrument's quantity was picked. */
  unit: boolean;
}

function ReadingFields({
  build,
  clipId,
  instruments,
  momentId,
  momentLabel,
  pendingMoment,
  heard,
  onSaved,
  onCancel,
}: {
  build: Build;
  clipId: number;
  instruments: Instrument[];
  momentId: number | null;
  /** The label of the moment the reading is tied to ('' = none): offered as the reading's name. */
  momentLabel: string;
  /** The moment to mark when the reading is saved (a form filled in from what was heard). */
  pendingMoment: PendingMoment | null;
  /** What was heard in the clip's sound, when the form was opened from it: its figures fill the form. */
  heard?: HeardFigures;
  onSaved: (reading: Reading) => void;
  onCancel: () => void;
}) {
  const create = useCreateReading(build.id);
  const readingList = useInfiniteQuery(readingQueries.list(build.id));
  const buildReadings = useMemo(() => readingList.data?.pages.flatMap((p) => p.items) ?? [], [readingList.data]);
  const takenKeys = useMemo(() => buildReadings.map((r) => r.key), [buildReadings]);
  const instrumentsRef = useRef(instruments);
  instrumentsRef.current = instruments;
  const resolver = useMemo(() => readingFormResolver(() => instrumentsRef.current), []);
  const [remembered] = useState(() => readClipChoices(clipId));
  const choicesFor = (readings: readonly Reading[]) =>
    startingChoices({ clipId, instruments, partIds: build.parts.map((p) => p.id), remembered, readings });
  const label = momentLabel.trim();
  // The account's scale; not chosen, °F goes with inches and °C with millimetres.
  const units = useDefaultUnits();
  const temperatureScale = units.temperatureScale ?? (units.system === 'imperial' ? 'degF' : 'degC');
  const [defaultValues] = useState(() => {
    const start = choicesFor(buildReadings);
    const startInstrument = instruments.find((i) => i.id === start.instrumentId) ?? instruments[0];
    if (!heard) return blankReadingForm(startInstrument, start.partId, label, temperatureScale);
    // Heard figures: an instrument of their quantity (feeler blades for a bracket), and the figures as said.
    const instrument = instrumentForHeard(heard, instruments, startInstrument);
    return withHeardFigures(blankReadingForm(instrument, start.partId, label, temperatureScale), heard);
  });
  const form = useForm<ReadingFormValues>({ defaultValues, resolver, mode: 'onTouched' });
  const { register, control, formState, setError, handleSubmit, setValue, getValues } = form;
  const repeats = useFieldArray({ control, name: 'values' });
  const watched = useWatch({ control }) as ReadingFormValues;
  const errors = formState.errors;
  const instrument = instruments.find((i) => String(i.id) === watched.instrumentId);
  const [momentMissing, setMomentMissing] = useState(false);
  // Until the builder picks a way of reading, it follows the instrument (what was heard counts as picked).
  const [kindByHand, setKindByHand] = useState(heard !== undefined);
  const [kindAsHeard, setKindAsHeard] = useState(heard !== undefined);
  const byHand = useRef<ChosenByHand>({ instrument: false, part: false, name: false, unit: false });
  const nameInput = useRef<HTMLInputElement | null>(null);
  const kindLegendId = useId();
  const kindHintId = useId();

  /**
   * The instrument, the way of reading it gives unless one was picked by hand (never a feeler
   * bracket for an instrument that does not read lengths), and its unit unless another of its
   * quantity was picked by hand.
   */
  function chooseInstrument(idText: string) {
    const chosen = instruments.find((i) => String(i.id) === idText);
    setValue('instrumentId', idText);
    if (!kindByHand || !kindsFor(chosen).includes(getValues('kind'))) {
      setValue('kind', defaultKindFor(chosen));
      setKindAsHeard(false);
    }
    setValue('unit', unitAfterChoosing(chosen, getValues('unit'), byHand.current.unit));
  }

  // Opened before the build's readings were loaded: take the clip's last choices once they are.
  const readingsAtOpening = useRef(readingList.data !== undefined);
  useEffect(() => {
    if (readingsAtOpening.current || !readingList.data || remembered) return;
    readingsAtOpening.current = true;
    const next = choicesFor(buildReadings);
    const nextInstrument = instruments.find((i) => i.id === next.instrumentId);
    const pick = heard && nextInstrument ? instrumentForHeard(heard, instruments, nextInstrument) : nextInstrument;
    if (!byHand.current.instrument && pick) chooseInstrument(String(pick.id));
    if (!byHand.current.part) setValue('partId', next.partId === null ? '' : String(next.partId));
    // Only when the list first arrives; later refetches must not move the builder's choices.
  }, [readingList.data]);

  // The moment's label names the reading while the name is empty and untouched; typing replaces it.
  useEffect(() => {
    if (!label || byHand.current.name || getValues('name').trim()) return;
    setValue('name', label);
  }, [label, getValues, setValue]);
  useEffect(() => {
    const input = nameInput.current;
    if (input && document.activeElement === input && input.value && input.value === label) input.select();
  }, [label]);

  const submit = handleSubmit(async (values) => {
    if (momentId === null && !pendingMoment) {
      setMomentMissing(true);
      return;
    }
    setMomentMissing(false);
    // A form filled in from what was heard marks its moment now, and takes it back if the reading is refused.
    let marked: Moment | null = null;
    try {
      if (momentId === null && pendingMoment) marked = await pendingMoment.mark();
    } catch (error) {
      setError('root.moment', { message: errorMessage(error) });
      return;
    }
    try {
      const reading = await create.mutateAsync(toReadingInput(values, marked?.id ?? momentId!));
      writeClipChoices(clipId, { instrumentId: reading.instrumentId, partId: reading.partId });
      onSaved(reading);
    } catch (error) {
      if (marked) pendingMoment?.unmark(marked);
      const details = error instanceof ApiError ? error.details.filter((d) => d.path) : [];
      for (const d of details) {
        const path = d.path === 'key' ? 'name' : formPathOf(d.path ?? '', values);
        setError(path as Path<ReadingFormValues>, { message: d.message });
      }
      setError('root.server', { message: errorMessage(error) });
    }
  });

  const nameField = register('name', {
    onChange: () => {
      byHand.current.name = true;
    },
  });
  const registerInstrument = register('instrumentId', {
    onChange: (event: { target: { value: string } }) => {
      byHand.current.instrument = true;
      chooseInstrument(event.target.value);
    },
  });
  const partField = register('partId', {
    onChange: () => {
      byHand.current.part = true;
    },
  });
  const kindField = register('kind', {
    onChange: () => {
      setKindByHand(true);
      setKindAsHeard(false);
    },
  });
  // Controlled: its options change with the instrument, and the unit set for it must land on them.
  const unitControl = useController({ control, name: 'unit' }).field;
  const unitField = {
    name: unitControl.name,
    ref: unitControl.ref,
    value: unitControl.value,
    onBlur: unitControl.onBlur,
    onChange: (event: { target: { value: string } }) => {
      byHand.current.unit = true;
      unitControl.onChange(event.target.value);
    },
  };
  const length = readsLength(instrument);
  const typedName = watched.name?.trim() ?? '';

  return (
    <form noValidate onSubmit={submit} className="flex flex-col gap-3" aria-label="Reading">
      <div className="flex flex-col gap-1">
        <Field
          label="Name"
          required
          error={errors.name?.message}
          hint={
            typedName ? (
              <>
                Key <span className="figures">{suggestKey(typedName, takenKeys)}</span>: how clearances and claims name it.
              </>
            ) : (
              'e.g. “Bore depth, as supplied”.'
            )
          }
        >
          {/* The form opens from R or a button in the player: typing goes straight into the name. */}
          <Input
            {...nameField}
            ref={(element) => {
              nameField.ref(element);
              nameInput.current = element;
            }}
            autoComplete="off"
            className="h-8! text-sm"
            autoFocus
          />
        </Field>
        {label && typedName !== label && (
          <p className="flex flex-wrap items-baseline gap-x-2 text-xs text-ink-muted" data-label-suggestion="">
            <span>
              The moment is labelled <span className="font-medium text-ink">“{label}”</span>.
            </span>
            <button
              type="button"
              className="rounded-sm text-accent underline underline-offset-2 hover:text-ink"
              onClick={() => {
                byHand.current.name = true;
                setValue('name', label, { shouldValidate: formState.isSubmitted, shouldDirty: true });
                nameInput.current?.focus();
              }}
            >
              Use it as the name
            </button>
          </p>
        )}
      </div>

      <Field label="Instrument" required error={errors.instrumentId?.message}>
        <Select {...registerInstrument} size="sm">
          {instruments.map((i) => (
            <option key={i.id} value={i.id}>
              {instrumentOptionText(i)}
            </option>
          ))}
        </Select>
      </Field>
      {instrument && <InstrumentState instrument={instrument} takenOn={watched.takenOn} />}

      <Field label="Part" error={errors.partId?.message} hint={build.parts.length === 0 ? 'This build lists no parts; add them with “Edit build”.' : undefined}>
        <Select {...partField} size="sm">
          <option value="">Not tied to a part</option>
          {build.parts.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name}
              {p.serial ? ` · ${p.serial}` : ''}
            </option>
          ))}
        </Select>
      </Field>

      <fieldset aria-labelledby={kindLegendId} aria-describedby={kindHintId} className="flex flex-col gap-1">
        <legend id={kindLegendId} className="mb-1 text-sm font-medium">
          How it was read
        </legend>
        <p id={kindHintId} className="-mt-1 mb-0.5 text-xs text-ink-muted">
          {kindAsHeard
            ? 'As heard; it stays when you change the instrument. Pick another if you read it otherwise.'
            : kindByHand
              ? 'As you chose; it stays when you change the instrument.'
              : `Follows the instrument: ${instrument ? (instrument.kind === 'feeler-blades' ? 'feeler blades give a bracket' : 'it shows one indication') : 'choose one'}. Pick another if you read it otherwise.`}
        </p>
        <div className="flex flex-col gap-1">
          {kindsFor(instrument).map((kind) => (
            <label
              key={kind}
              className={cn(
                'flex cursor-pointer items-baseline gap-2 rounded-md border px-2 py-1 text-sm',
                watched.kind === kind ? 'border-ink bg-paper-2' : 'border-rule',
              )}
            >
              <input type="radio" value={kind} {...kindField} className="translate-y-0.5 accent-(--color-ink)" />
              <span>
                <span className="font-medium">{readingKindLabels[kind]}</span>
                <span className="text-xs text-ink-muted"> · {kindHint(kind, instrument)}</span>
              </span>
            </label>
          ))}
        </div>
      </fieldset>

      <FigureFields form={form} repeats={repeats} instrument={instrument} values={watched} unitField={unitField} />

      {/* The part's temperature corrects a length to 20 °C; a torque, a volume or a pressure has no such correction here. */}
      {length && (
        <div className="grid grid-cols-2 gap-2">
          <Field label={`Temperature, ${watched.temperatureScale === 'degF' ? '°F' : '°C'}`} error={errors.temperatureC?.message} hint="Of the part; optional. Corrected to 20 °C with the material.">
            <Input {...register('temperatureC')} inputMode="decimal" className="figures h-8! text-sm" />
          </Field>
          <Field label="Material" error={errors.material?.message} hint="To correct to 20 °C.">
            <Select {...register('material')} size="sm">
              <option value="">None</option>
              {materialNames.map((m) => (
                <option key={m} value={m}>
                  {materialExpansion[m].label}
                </option>
              ))}
            </Select>
          </Field>
        </div>
      )}

      <Field label="Taken on" error={errors.takenOn?.message} hint="Calibration and zero checks are judged on this day.">
        <Input type="date" {...register('takenOn')} className="figures h-8! text-sm" />
      </Field>
      <Field label="Note" error={errors.note?.message}>
        <Textarea {...register('note')} rows={2} className="text-sm" />
      </Field>

      {momentMissing && momentId === null && (
        <p role="alert" className="flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>No moment is marked for this reading: mark one above (Mark), then save.</span>
        </p>
      )}
      {errors.root?.moment?.message && (
        <p role="alert" className="flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>Moment: {errors.root.moment.message}</span>
        </p>
      )}
      {errors.root?.server?.message && (
        <p role="alert" className="flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>Not saved: {errors.root.server.message}</span>
        </p>
      )}

      <div className="flex flex-wrap gap-2">
        <Button type="submit" variant="primary" loading={formState.isSubmitting} loadingText="Saving…">
          Save reading
        </Button>
        <Button variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

/** The instrument's unit, resolution, calibration on the day and zero check, with warnings right there. */
function InstrumentState({ instrument, takenOn }: { instrument: Instrument; takenOn: string }) {
  const day = /^\d{4}-\d{2}-\d{2}$/.test(takenOn) ? takenOn : null;
  const state = day ? calibrationStateOn(instrument, day) : instrument.calibrationState;
  const due = calibrationDueOn(instrument.lastCalibratedOn, instrument.calibrationIntervalDays);
  const unit = instrument.unit;
  const needsZero = zeroCheckedKinds.has(instrument.kind);
  const zeroToday = instrument.latestZeroCheck && instrument.latestZeroCheck.checkedOn === day ? instrument.latestZeroCheck : null;
  return (
    <div className="-mt-1 flex flex-col gap-1 text-xs" data-instrument-state="">
      <p className="flex flex-wrap items-center gap-x-2 gap-y-1 text-ink-muted">
        <span className="figures">
          reads in {quantityOf(unit) === 'length' ? unitTable[unit].symbol : unitTable[unit].name}, resolution {withReadingUnit(instrument.resolution, unit)}
          {instrument.statedUncertainty ? `, stated u ${withReadingUnit(instrument.statedUncertainty, unit)}` : ''}
        </span>
        <CalibrationBadge state={state} />
      </p>
      {state === 'overdue' && (
        <p className="flex items-start gap-1 text-danger">
          <WarningIcon />
          <span>
            Calibration was due on {due}. A reading taken on {day} carries a calibration warning; check it against a standard or use
            another instrument.
          </span>
        </p>
      )}
      {state === 'no-record' && (
        <p className="flex items-start gap-1 text-verdict-undecided">
          <WarningIcon />
          <span>No calibration date on record: the reading carries a warning. Add it in the instruments register.</span>
        </p>
      )}
      {needsZero && !zeroToday && (
        <p className="flex items-start gap-1 text-verdict-undecided">
          <WarningIcon />
          <span>
            No zero check on {day ?? 'that day'}
            {instrument.latestZeroCheck ? ` (latest ${instrument.latestZeroCheck.checkedOn})` : ''}: no offset is subtracted and the
            reading carries a warning. <Link to="/instruments">Log a zero check</Link> first if you can.
          </span>
        </p>
      )}
      {needsZero && zeroToday && (
        <p className="figures text-ink-muted">
          Zero check that day: offset {withReadingUnit(zeroToday.offset, zeroToday.unit)}, subtracted from this reading.
        </p>
      )}
    </div>
  );
}

/** The figure boxes for the chosen kind, each read back live ("reads as 0.5642 in") or told why not. */
function FigureFields({
  form,
  repeats,
  instrument,
  values,
  unitField,
}: {
  form: ReturnType<typeof useForm<ReadingFormValues>>;
  repeats: ReturnType<typeof useFieldArray<ReadingFormValues, 'values'>>;
  instrument: Instrument | undefined;
  values: ReadingFormValues;
  unitField: { name: string; ref: (element: HTMLSelectElement | null) => void; value: string; onBlur: () => void; onChange: (event: { target: { value: string } }) => void };
}) {
  const { register, formState } = form;
  const errors = formState.errors;
  const unit: ReadingUnit | undefined = values.unit || instrument?.unit;
  const quantity = unit ? quantityOf(unit) : 'length';
  const unitHint = unit ? `in ${unitTable[unit].name} unless you type a unit` : 'with its unit';
  // Lengths keep the examples they always had; other quantities show theirs ("64.2 cc, 64.2 ml or 3.92 cu in").
  const examples = quantity === 'length' ? '0.5642, 0.5642 in, 564.2 thou' : figureExamples[quantity];
  const placeholder = `e.g. ${figureExamples[quantity]}`;
  const readBack = useMemo(() => readBackOf(values, instrument), [values, instrument]);
  const fieldHasError = Boolean(errors.value || errors.passes || errors.stops || errors.values);

  return (
    <div className="flex flex-col gap-2">
      {instrument && (
        <Field
          label="Unit"
          error={errors.unit?.message}
          hint={`For figures typed without one; ${instrument.kind === 'other' ? 'this instrument' : `the ${kindWords(instrument.kind)}`} reads ${quantityOf(instrument.unit)}.`}
        >
          <Select {...unitField} size="sm">
            <UnitOptions quantity={quantityOf(instrument.unit)} extra={values.unit || undefined} />
          </Select>
        </Field>
      )}
      {values.kind === 'direct' && (
        <Field label="Value as shown" required error={errors.value?.message} hint={`As the instrument shows it, ${unitHint}: ${examples}.`}>
          <Input {...register('value')} autoComplete="off" inputMode="decimal" placeholder={placeholder} className="figures h-8! text-sm" />
        </Field>
      )}
      {values.kind === 'bracket' && (
        // One above the other: the form is a narrow column, and a refusal of the pair reads in one line or two.
        <div className="flex flex-col gap-2">
          <Field label="Thickest blade that enters" required error={errors.passes?.message} hint={`As marked on the blade, ${unitHint}.`}>
            <Input {...register('passes')} autoComplete="off" inputMode="decimal" className="figures h-8! text-sm" />
          </Field>
          <Field label="Thinnest blade that does not" required error={errors.stops?.message} hint="Thicker than the one that enters.">
            <Input {...register('stops')} autoComplete="off" inputMode="decimal" className="figures h-8! text-sm" />
          </Field>
        </div>
      )}
      {values.kind === 'repeated' && (
        <fieldset className="flex flex-col gap-1.5">
          <legend className="mb-1 text-sm font-medium">
            Values as shown <span className="font-normal text-ink-muted">(at least 2; {unitHint})</span>
          </legend>
          <ol className="grid grid-cols-2 gap-1.5">
            {repeats.fields.map((field, index) => (
              <li key={field.id} className="flex items-start gap-1">
                <Field
                  label={<span className="sr-only">Value {index + 1}</span>}
                  error={errors.values?.[index]?.text?.message}
                  className="min-w-0 flex-1 [&>label]:sr-only"
                >
                  <Input {...register(`values.${index}.text`)} placeholder={`value ${index + 1}`} autoComplete="off" inputMode="decimal" className="figures h-8! text-sm" />
                </Field>
                {repeats.fields.length > 2 && (
                  <Button size="sm" variant="quiet" className="h-8 px-1.5" onClick={() => repeats.remove(index)} aria-label={`Remove value ${index + 1}`}>
                    ✕
                  </Button>
                )}
              </li>
            ))}
          </ol>
          {errors.values?.root?.message && (
            <p className="flex items-start gap-1.5 text-sm text-danger">
              <WarningIcon />
              <span>{errors.values.root.message}</span>
            </p>
          )}
          {repeats.fields.length < MAX_ENTERED_REPEATS && (
            <Button size="sm" variant="quiet" className="self-start" onClick={() => repeats.append({ text: '' })}>
              Add a value
            </Button>
          )}
        </fieldset>
      )}
      {readBack && !(fieldHasError && !readBack.ok) && (
        <p role="status" className={cn('figures flex items-start gap-1.5 text-xs', readBack.ok ? 'text-ink' : 'text-verdict-undecided')} data-read-back="">
          {!readBack.ok && <WarningIcon />}
          <span>{readBack.text}</span>
        </p>
      )}
      {readBack?.budget && <ReadingBudget {...readBack.budget} />}
    </div>
  );
}

/**
 * What the typed figures read as, by `normaliseReadingFigures` (the server's check), and the
 * engine's estimate with its standard uncertainty; or the first reason they do not read.
 */
function readBackOf(
  values: ReadingFormValues,
  instrument: Instrument | undefined,
): { ok: boolean; text: string; budget?: Parameters<typeof ReadingBudget>[0] } | null {
  const figures = figuresOf(values);
  const typed = 'value' in figures ? figures.value : 'passes' in figures ? `${figures.passes}${figures.stops}` : figures.values.join('');
  if (!instrument || !typed?.trim()) return null;
  const normal = normaliseReadingFigures(figures, instrument);
  if (!normal.ok) return { ok: false, text: normal.problems[0]?.message ?? 'These figures do not read as figures of what the instrument measures.' };
  const f = normal.figures;
  const inUnit = (text: string | null) => withReadingUnit(text ?? '', f.unit);
  const shown =
    values.kind === 'direct'
      ? `reads as ${inUnit(f.value)}`
      : values.kind === 'bracket'
        ? `reads as ${inUnit(f.passes)} enters, ${inUnit(f.stops)} does not`
        : `reads as ${f.values?.length ?? 0} values in ${unitTable[f.unit].symbol}: ${(f.values ?? []).join(', ')}`;
  const zero = instrument.latestZeroCheck && instrument.latestZeroCheck.checkedOn === values.takenOn ? instrument.latestZeroCheck : null;
  const celsius = temperatureOf(values.temperatureC, values.temperatureScale);
  const temperature = typeof celsius === 'number' ? celsius : null;
  const built = toEngineReading(
    { ...f, kind: values.kind, temperatureC: Number.isFinite(temperature) ? temperature : null, material: values.material || null },
    instrument,
    zero,
  );
  const checked = engineReadingSchema.safeParse(built.engine);
  if (!checked.success) return { ok: true, text: shown };
  const key = keyFromName(values.name || 'reading');
  const evaluated = evaluateReading(key, checked.data, engineInstrumentsMap([built.instrument]));
  const estimate = formatValue(evaluated.estimate, evaluated.unit, decimalsForStep(evaluated.displayStep));
  // What u is made of is the table under this line: the same components a result's budget will list.
  return {
    ok: true,
    text: `${shown}; estimate ${estimate}, u = ${formatUncertaintyIn(evaluated.standardUncertainty, evaluated.unit)}`,
    budget: { evaluated, instrumentNames: built.instrument ? { [built.instrument.name]: instrument.name } : {} },
  };
}
