import { useDeferredValue, useEffect, useId, useMemo, useRef, useState, type ReactNode } from 'react';
import { useFieldArray, useForm, useWatch, type Path, type UseFormReturn } from 'react-hook-form';
import { useInfiniteQuery, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Build } from '@shared/builds/build.schema';
import type { Clearance } from '@shared/clearances/clearance.schema';
import { computeClearance } from '@shared/clearances/clearance-calc';
import { engineInstrumentsMap } from '@shared/measure/instrument-map';
import { clearanceTemplates } from '@shared/clearances/templates';
import { formulaTemplate, formulaTemplates } from '@shared/measure/formula-templates';
import { quantityOf, unitsOf, type AnyUnit, type QuantityKind } from '@shared/measure/quantities';
import { figureExamples } from '@shared/measure/quantity-text';
import type { Reading } from '@shared/readings/reading.schema';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { useToast } from '@/components/ui/toast';
import { EDIT_CONFLICT } from '@/features/readings/api/reading-mutations';
import { WarningIcon } from '@/features/readings/components/reading-badges';
import { ApiError, errorMessage } from '@/lib/api';
import { cn } from '@/lib/cn';
import { useCreateClearance, useUpdateClearance } from '../api/clearance-mutations';
import { clearanceQueries, clearanceSpecQueries } from '../api/clearance-queries';
import {
  OWN_FORMULA,
  automaticResultUnit,
  blankClearanceForm,
  clearanceFormOf,
  clearanceKeyFor,
  clearanceFormPath,
  clearanceFormResolver,
  constantText,
  constantsForTemplate,
  modeOf,
  quantityOfReading,
  resultModel,
  suggestedClearanceName,
  sumTemplate,
  termsForTemplate,
  toClearanceInput,
  unitChoiceLabel,
  versionSummary,
  type ClearanceFormContext,
  type ClearanceFormValues,
} from '../lib/clearance-form';
import { estimateText } from '@/features/readings/lib/reading-text';
import { ClearanceResultView, specSourceWords } from './clearance-result-view';

export interface ClearanceFormProps {
  build: Build;
  readings: Reading[];
  /** The clearance being edited; a new one when absent. */
  clearance?: Clearance;
  onDone: (saved: Clearance | null) => void;
}

/** The ways of making a result, as the picker groups them. */
const templateGroups: { title: string; choices: { id: string; name: string }[] }[] = [
  { title: 'Sums and differences of readings', choices: clearanceTemplates.map((t) => ({ id: t.id, name: t.name })) },
  {
    title: 'Formulas',
    choices: [...formulaTemplates.map((t) => ({ id: t.id, name: t.name })), { id: OWN_FORMULA, name: 'Your own formula' }],
  },
];

const ownFormulaExplanation =
  'Write plain arithmetic over names you give the readings you pick: + − × ÷ (or * and /), ^ for a power, brackets, sqrt(…) and pi. ' +
  'Each reading goes by its key unless you rename it. The engine checks that the units fit (a length cannot be added to a volume) and works out the uncertainty through the formula.';

/** The chosen way's explanation, in words. */
function explanationOf(id: string): string {
  if (id === OWN_FORMULA) return ownFormulaExplanation;
  return formulaTemplate(id)?.explanation ?? sumTemplate(id)?.explanation ?? '';
}

/**
 * Define or edit a result: a signed-sum template (its explanation in words) whose slots take
 * readings, custom terms with + and −, a formula template whose slots take readings of their
 * quantity, or a formula written by hand over names given to the readings; the unit to state it
 * in; a spec version from the library; k. Value, U, verdict, band picture and working update as
 * they are chosen, by the engine the server runs, with the formula as the server reads it.
 */
export function ClearanceForm({ build, readings, clearance, onDone }: ClearanceFormProps) {
  // The build's other clearance keys (the list the panel shows), so a suggested key is free.
  const clearanceList = useInfiniteQuery(clearanceQueries.list(build.id));
  const takenKeys = useMemo(
    () => (clearanceList.data?.pages.flatMap((p) => p.items) ?? []).filter((c) => c.id !== clearance?.id).map((c) => c.key),
    [clearanceList.data, clearance?.id],
  );
  const byId = useMemo(() => new Map(readings.map((r) => [String(r.id), r])), [readings]);
  const context = useMemo<ClearanceFormContext>(() => ({ readings: byId }), [byId]);
  const form = useForm<ClearanceFormValues, ClearanceFormContext>({
    defaultValues: clearance ? clearanceFormOf(clearance) : blankClearanceForm(takenKeys),
    resolver: clearanceFormResolver,
    context,
    mode: 'onTouched',
  });
  const { register, control, formState, setError, handleSubmit, setValue, getValues } = form;
  const terms = useFieldArray({ control, name: 'terms' });
  const constantRows = useFieldArray({ control, name: 'constants' });
  const watched = useWatch({ control }) as ClearanceFormValues;
  const values = useDeferredValue(watched);
  const create = useCreateClearance(build.id);
  const update = useUpdateClearance();
  const queryClient = useQueryClient();
  const { toast } = useToast();
  const [lockVersion, setLockVersion] = useState(clearance?.lockVersion ?? 1);
  const [conflict, setConflict] = useState<'stale' | 'reloaded' | null>(null);
  const [reloading, setReloading] = useState(false);
  const templateLegendId = useId();
  const explanationId = useId();
  const keyId = useId();
  const errors = formState.errors;
  const mode = modeOf(watched.template);
  const sum = sumTemplate(watched.template);
  const template = formulaTemplate(watched.template);
  const slotCount = mode === 'template' ? (template?.slots.length ?? 0) : (sum?.slots.length ?? 0);
  const sortedReadings = useMemo(() => [...readings].sort((a, b) => a.name.localeCompare(b.name)), [readings]);
  // A stored clearance keeps its name and key (stories cite the key); a new one's follow the form until typed.
  const nameByHand = useRef(Boolean(clearance));
  const [keyByHand, setKeyByHand] = useState(Boolean(clearance));
  const suggestedKey = clearanceKeyFor(watched.name ?? '', takenKeys);
  const readingKeys = useMemo(() => new Set(readings.map((r) => r.key)), [readings]);

  useEffect(() => {
    if (!keyByHand && getValues('key') !== suggestedKey) setValue('key', suggestedKey);
  }, [keyByHand, suggestedKey, getValues, setValue]);

  /** The name the template and its picked readings suggest, unless the builder typed one. */
  function followName(id: ClearanceFormValues['template'], rows: ClearanceFormValues['terms']) {
    if (!nameByHand.current) setValue('name', suggestedClearanceName(id, rows, readings), { shouldValidate: formState.isSubmitted });
  }

  const spec = useQuery({ ...clearanceSpecQueries.detail(Number(values.specId)), enabled: Boolean(values.specId) });
  const version = spec.data?.versions?.find((v) => String(v.id) === values.specVersionId) ?? null;

  // The model as typed now (formula problems show beside the box at once), and as deferred for the engine.
  const typedModel = useMemo(() => resultModel(watched, byId), [watched, byId]);
  const model = useMemo(() => resultModel(values, byId), [values, byId]);
  const quantity = model.quantity;
  const unitChoices: readonly AnyUnit[] = quantity ? unitsOf(quantity) : [];
  const chosenUnit = values.resultUnit && quantity && quantityOf(values.resultUnit) === quantity ? values.resultUnit : null;
  const autoUnit = quantity
    ? automaticResultUnit(quantity, version?.unit ?? null, [
        ...values.terms.flatMap((t) => byId.get(t.readingId)?.unit ?? []),
        ...Object.values(model.formula?.constants ?? {}).map((c) => c.unit),
      ])
    : null;

  // A unit of another quantity (the template changed) goes back to the automatic one.
  useEffect(() => {
    const unit = getValues('resultUnit');
    if (unit && quantity && quantityOf(unit) !== quantity) setValue('resultUnit', '');
  }, [quantity, getValues, setValue]);

  const formulaProblems = typedModel.issues.filter((i) => i.path === 'formula');
  const waitingFor = (() => {
    if (model.mode === 'sum') return null;
    const missing = values.terms.flatMap((t, i) => (byId.has(t.readingId) ? [] : [template?.slots[i]?.label.toLowerCase() ?? `reading ${i + 1}`]));
    if (missing.length) return `Pick the ${missing.join(', ')} reading${missing.length === 1 ? '' : 's'}`;
    if (model.mode === 'formula' && !values.formula.trim()) return 'Write the formula';
    if (model.issues.some((i) => i.path.startsWith('constants.'))) return template ? `Enter ${template.constants.filter((c) => !c.fixed).map((c) => `the ${c.label.toLowerCase()}`).join(' and ')}` : 'Finish the constants';
    if (model.issues.some((i) => i.path === 'formula')) return 'Put the formula right (the problem is shown under it)';
    if (model.mode === 'formula' && values.terms.some((t) => byId.has(t.readingId) && !t.symbol.trim())) return 'Name every reading';
    return null;
  })();

  const live = useMemo(() => {
    if (model.terms.length === 0 || waitingFor) return null;
    const typed = values.coverageFactor.trim().replace(',', '.');
    const k = Number(typed);
    const instruments = engineInstrumentsMap(values.terms.map((t) => byId.get(t.readingId)?.engineInstrument));
    return computeClearance({
      terms: model.terms,
      spec: version,
      coverageFactor: typed !== '' && Number.isFinite(k) && k >= 1 && k <= 4 ? k : null,
      instruments,
      formula: model.formula,
      resultUnit: chosenUnit,
    });
  }, [model, waitingFor, values.coverageFactor, values.terms, byId, version, chosenUnit]);

  function chooseTemplate(id: ClearanceFormValues['template']) {
    const before = getValues('template');
    const previous = formulaTemplate(before);
    const rows = termsForTemplate(id, getValues('terms'), (readingId) => byId.get(readingId)?.key);
    setValue('terms', rows);
    // Starting one's own formula from a template carries the template's formula and constants over.
    if (id === OWN_FORMULA && previous && !getValues('formula').trim()) {
      setValue('formula', previous.formula);
      setValue('constants', [
        ...previous.constants.filter((c) => c.fixed).map((c) => ({ name: c.key, value: constantText(c.fixed!) })),
        ...getValues('constants'),
      ]);
    } else {
      setValue('constants', constantsForTemplate(id, getValues('constants')));
    }
    followName(id, rows);
  }

  /** A reading picked for the formula goes by its key, unless the builder named it otherwise. */
  function pickedForFormula(index: number) {
    if (modeOf(getValues('template')) !== 'formula') return;
    const row = getValues(`terms.${index}`);
    const key = byId.get(row.readingId)?.key;
    if (key && (!row.symbol.trim() || readingKeys.has(row.symbol.trim()))) setValue(`terms.${index}.symbol`, key, { shouldValidate: formState.isSubmitted });
  }

  const submit = handleSubmit(async (formValues) => {
    // A key left as suggested is not sent: the server derives the same one from the name, free at the moment it saves.
    const input = toClearanceInput(keyByHand ? formValues : { ...formValues, key: '' }, byId);
    try {
      const saved = clearance
        ? await update.mutateAsync({
            clearanceId: clearance.id,
            patch: {
              lockVersion,
              name: input.name,
              key: input.key ?? clearanceKeyFor(input.name, takenKeys),
              template: input.template ?? null,
              terms: input.terms.map((t) => ({ ...t, sign: t.sign ?? 1 })),
              formula: input.formula ?? null,
              constants: input.constants ?? {},
              resultUnit: input.resultUnit ?? null,
              specVersionId: input.specVersionId ?? null,
              coverageFactor: input.coverageFactor ?? null,
              note: input.note ?? '',
            },
          })
        : await create.mutateAsync(input);
      toast({ tone: 'success', title: clearance ? 'Result saved' : 'Result worked out', description: `${saved.name}: ${saved.result?.display ?? 'not worked out'}` });
      onDone(saved);
    } catch (error) {
      if (error instanceof ApiError && error.code === EDIT_CONFLICT) {
        setConflict('stale');
        return;
      }
      const details = error instanceof ApiError ? error.details.filter((d) => d.path) : [];
      for (const d of details) setError(clearanceFormPath(d.path ?? '', formValues.constants) as Path<ClearanceFormValues>, { message: d.message });
      setError('root.server', { message: errorMessage(error) });
    }
  });

  async function reload() {
    if (!clearance) return;
    setReloading(true);
    try {
      await queryClient.refetchQueries({ queryKey: clearanceQueries.list(build.id).queryKey });
      const pages = queryClient.getQueryData(clearanceQueries.list(build.id).queryKey)?.pages ?? [];
      const fresh = pages.flatMap((p) => p.items).find((c) => c.id === clearance.id);
      if (!fresh) {
        setError('root.server', { message: 'This clearance was deleted elsewhere. Cancel to close the form.' });
        setConflict(null);
        return;
      }
      setLockVersion(fresh.lockVersion);
      setConflict('reloaded');
    } catch (error) {
      setError('root.server', { message: `Could not reload: ${errorMessage(error)}` });
    } finally {
      setReloading(false);
    }
  }

  const readingOptions = (only?: QuantityKind) => (
    <>
      <option value="">Choose a reading…</option>
      {sortedReadings
        .filter((r) => !only || quantityOfReading(r) === only)
        .map((r) => (
          <option key={r.id} value={r.id}>
            {r.name} · {r.key} · {r.result.display}
          </option>
        ))}
    </>
  );

  const pickedLine = (index: number, className = 'col-start-2 -mt-1') => {
    const picked = byId.get(watched.terms[index]?.readingId ?? '');
    if (!picked) return null;
    return (
      <p className={cn('figures text-xs break-words text-ink-muted', className)}>
        {picked.name}: {estimateText(picked)}
        {picked.reviewState === 'flagged' && ' · flagged in review'}
      </p>
    );
  };

  return (
    <form noValidate onSubmit={submit} aria-label={clearance ? `Edit result ${clearance.name}` : 'New result'} className="grid gap-5 lg:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
      <div className="flex min-w-0 flex-col gap-4">
        <fieldset aria-labelledby={templateLegendId} aria-describedby={explanationId} className="flex min-w-0 flex-col gap-2">
          <legend id={templateLegendId} className="mb-1 text-sm font-medium">
            How it is made
          </legend>
          {templateGroups.map((group) => (
            <div key={group.title} role="group" aria-label={group.title} className="flex flex-col gap-1">
              <p className="text-xs font-medium tracking-wide text-ink-muted uppercase">{group.title}</p>
              <div className="grid gap-1 sm:grid-cols-2">
                {group.choices.map((t) => (
                  <label
                    key={t.id}
                    className={cn(
                      'flex min-w-0 cursor-pointer items-start gap-2 rounded-md border px-2.5 py-1.5 text-sm',
                      watched.template === t.id ? 'border-ink bg-paper-2 font-medium' : 'border-rule',
                    )}
                  >
                    <input
                      type="radio"
                      value={t.id}
                      {...register('template', { onChange: (e: { target: { value: string } }) => chooseTemplate(e.target.value) })}
                      className="mt-1 accent-(--color-ink)"
                    />
                    <span className="min-w-0">{t.name}</span>
                  </label>
                ))}
              </div>
            </div>
          ))}
          <p id={explanationId} className="rounded-md bg-paper-2/60 px-2.5 py-2 text-xs text-ink-muted" data-template-explanation="">
            {explanationOf(watched.template)}
          </p>
        </fieldset>

        <fieldset className="flex min-w-0 flex-col gap-2">
          <legend className="mb-1 text-sm font-medium">
            {mode === 'formula' ? 'Readings and the names the formula gives them' : slotCount ? 'Readings for each slot' : 'Terms (+ adds, − subtracts)'}
          </legend>
          {readings.length === 0 && <p className="text-sm text-ink-muted">No readings logged in this build yet: log them at their moments first.</p>}
          <ol className="flex flex-col gap-2">
            {terms.fields.map((field, index) => {
              if (mode === 'template' && template) {
                const slot = template.slots[index];
                if (!slot) return null;
                const none = !readings.some((r) => quantityOfReading(r) === slot.quantity);
                return (
                  <li key={field.id} className="flex min-w-0 flex-col gap-1" data-slot={slot.key}>
                    <Field
                      label={slot.label}
                      hint={
                        <>
                          {slot.hint} As <span className="figures text-ink">{slot.key}</span> in the formula.
                          {none && <span className="block text-verdict-undecided">No {slot.quantity} readings in this build yet: log one first.</span>}
                        </>
                      }
                      error={errors.terms?.[index]?.readingId?.message}
                    >
                      <Select size="sm" {...register(`terms.${index}.readingId`, { onChange: () => followName(getValues('template'), getValues('terms')) })}>
                        {readingOptions(slot.quantity)}
                      </Select>
                    </Field>
                    {pickedLine(index, '')}
                  </li>
                );
              }
              if (mode === 'formula') {
                return (
                  // On a phone the name goes under the reading, so the reading's box keeps its width.
                  <li key={field.id} className="grid grid-cols-[minmax(0,1fr)_auto] items-start gap-x-2 gap-y-1 sm:grid-cols-[minmax(0,1fr)_minmax(0,9rem)_auto]" data-formula-term="">
                    <Field label={`Reading ${index + 1}`} error={errors.terms?.[index]?.readingId?.message} className="col-start-1 row-start-1">
                      <Select size="sm" {...register(`terms.${index}.readingId`, { onChange: () => pickedForFormula(index) })}>
                        {readingOptions()}
                      </Select>
                    </Field>
                    <Field label={`Name of reading ${index + 1}`} error={errors.terms?.[index]?.symbol?.message} className="col-start-1 row-start-2 sm:col-start-2 sm:row-start-1">
                      <Input {...register(`terms.${index}.symbol`)} autoComplete="off" spellCheck={false} className="figures h-8! text-sm" />
                    </Field>
                    {terms.fields.length > 1 ? (
                      <Button size="sm" variant="quiet" className="col-start-2 row-start-1 mt-6 px-2 sm:col-start-3" onClick={() => terms.remove(index)} aria-label={`Remove reading ${index + 1}`}>
                        ✕
                      </Button>
                    ) : null}
                    {pickedLine(index, 'col-start-1 sm:col-span-2')}
                  </li>
                );
              }
              const slot = sum?.slots[index];
              return (
                <li key={field.id} className="grid grid-cols-[2.25rem_minmax(0,1fr)_auto] items-start gap-2">
                  {slot ? (
                    <span className="figures mt-7 text-center text-lg" aria-label={slot.sign === 1 ? 'plus' : 'minus'}>
                      {slot.sign === 1 ? '+' : '−'}
                    </span>
                  ) : (
                    <Field label={<span className="sr-only">Sign of term {index + 1}</span>} className="mt-6 [&>label]:sr-only">
                      <Select size="sm" {...register(`terms.${index}.sign`)} className="figures px-1 pr-1">
                        <option value="1">+</option>
                        <option value="-1">−</option>
                      </Select>
                    </Field>
                  )}
                  <Field label={slot ? slot.label : `Term ${index + 1}`} hint={slot?.hint} error={errors.terms?.[index]?.readingId?.message}>
                    <Select size="sm" {...register(`terms.${index}.readingId`, { onChange: () => followName(getValues('template'), getValues('terms')) })}>
                      {readingOptions()}
                    </Select>
                  </Field>
                  {!slot && terms.fields.length > 1 ? (
                    <Button size="sm" variant="quiet" className="mt-6 px-2" onClick={() => terms.remove(index)} aria-label={`Remove term ${index + 1}`}>
                      ✕
                    </Button>
                  ) : (
                    <span />
                  )}
                  {pickedLine(index)}
                </li>
              );
            })}
          </ol>
          {errors.terms?.root?.message && (
            <p className="flex items-start gap-1.5 text-sm text-danger">
              <WarningIcon />
              <span>{errors.terms.root.message}</span>
            </p>
          )}
          {mode === 'sum' && slotCount === 0 && terms.fields.length < 20 && (
            <Button size="sm" variant="quiet" className="self-start" onClick={() => terms.append({ readingId: '', sign: '1', symbol: '' })}>
              Add a term
            </Button>
          )}
          {mode === 'formula' && terms.fields.length < 20 && (
            <Button size="sm" variant="quiet" className="self-start" onClick={() => terms.append({ readingId: '', sign: '1', symbol: '' })}>
              Add a reading
            </Button>
          )}
        </fieldset>

        {mode === 'template' && template && (
          <div className="flex min-w-0 flex-col gap-2" data-template-formula="">
            <FormulaText label="Formula">{template.formula}</FormulaText>
            {template.constants.map((c) => {
              if (c.fixed) {
                return (
                  <p key={c.key} className="text-sm">
                    <span className="text-ink-muted">{c.label}:</span> <span className="figures">{c.key} = {constantText(c.fixed)}</span>{' '}
                    <span className="text-xs text-ink-muted">(fixed: {c.hint.replace(/\.$/, '').toLowerCase()})</span>
                  </p>
                );
              }
              const index = constantRows.fields.findIndex((_, i) => watched.constants[i]?.name === c.key);
              if (index < 0) return null;
              return (
                <Field key={c.key} label={c.label} hint={`${c.hint} As ${c.key} in the formula; e.g. ${figureExamples[c.quantity]}.`} error={typedModel.issues.find((i) => i.path === `constants.${index}.value`)?.message ?? errors.constants?.[index]?.value?.message} required>
                  <Input {...register(`constants.${index}.value`)} autoComplete="off" inputMode="decimal" className="figures h-8! max-w-60 text-sm" />
                </Field>
              );
            })}
          </div>
        )}

        {mode === 'formula' && (
          <div className="flex min-w-0 flex-col gap-3">
            <Field
              label="Formula"
              required
              hint="Arithmetic over the names above and the constants below, e.g. (swept + chamber) / chamber or bore - piston."
              error={formulaProblems.length ? formulaProblems.map((p) => p.message).join('; ') : errors.formula?.message}
            >
              <Textarea {...register('formula')} rows={3} spellCheck={false} autoComplete="off" className="figures text-sm" data-formula-box="" />
            </Field>
            {typedModel.unused.length > 0 && (
              <p className="-mt-2 text-xs text-ink-muted">
                Not used by the formula: <span className="figures">{typedModel.unused.join(', ')}</span>. Remove those readings, or use them.
              </p>
            )}
            <fieldset className="flex min-w-0 flex-col gap-2">
              <legend className="mb-1 text-sm font-medium">Constants (optional)</legend>
              <p className="text-xs text-ink-muted">A fixed figure the formula names, with its unit: a target size (3.990 in), half a turn (180°). A number alone has no unit.</p>
              {constantRows.fields.map((field, index) => (
                <div key={field.id} className="grid grid-cols-[minmax(0,9rem)_minmax(0,1fr)_auto] items-start gap-2">
                  <Field label={`Name of constant ${index + 1}`} error={typedModel.issues.find((i) => i.path === `constants.${index}.name`)?.message ?? errors.constants?.[index]?.name?.message}>
                    <Input {...register(`constants.${index}.name`)} autoComplete="off" spellCheck={false} className="figures h-8! text-sm" />
                  </Field>
                  <Field label={`Value of constant ${index + 1}`} error={typedModel.issues.find((i) => i.path === `constants.${index}.value`)?.message ?? errors.constants?.[index]?.value?.message}>
                    <Input {...register(`constants.${index}.value`)} autoComplete="off" className="figures h-8! text-sm" />
                  </Field>
                  <Button size="sm" variant="quiet" className="mt-6 px-2" onClick={() => constantRows.remove(index)} aria-label={`Remove constant ${index + 1}`}>
                    ✕
                  </Button>
                </div>
              ))}
              {constantRows.fields.length < 20 && (
                <Button size="sm" variant="quiet" className="self-start" onClick={() => constantRows.append({ name: '', value: '' })}>
                  Add a constant
                </Button>
              )}
            </fieldset>
          </div>
        )}

        {quantity && unitChoices.length < 2 ? (
          <p className="text-sm">
            <span className="font-medium">State the result in:</span> <span className="text-ink-muted">{unitChoiceLabel(unitChoices[0] ?? autoUnit ?? '1')}</span>
          </p>
        ) : (
          <Field
            label="State the result in"
            hint={quantity ? 'Automatic takes the spec’s unit when it has one of this quantity, else the readings’.' : 'Pick the readings first: the units offered are those of what the result measures.'}
            error={errors.resultUnit?.message}
          >
            <Select size="sm" {...register('resultUnit')} disabled={!quantity} className="max-w-80">
              <option value="">{autoUnit ? `Automatic: ${unitChoiceLabel(autoUnit)}` : 'Automatic'}</option>
              {unitChoices.map((u) => (
                <option key={u} value={u}>
                  {unitChoiceLabel(u)}
                </option>
              ))}
            </Select>
          </Field>
        )}

        <div className="grid gap-3 sm:grid-cols-2">
          <Field label="Name" required error={errors.name?.message}>
            <Input
              {...register('name', {
                onChange: () => {
                  nameByHand.current = true;
                },
              })}
              autoComplete="off"
              className="h-8! text-sm"
            />
          </Field>
          <Field id={keyId} label="Key" error={errors.key?.message}>
            <Input
              {...register('key', { onChange: () => setKeyByHand(true) })}
              // The explanation sits under both boxes, so the two boxes line up.
              aria-describedby={[`${keyId}-about`, errors.key?.message && `${keyId}-error`].filter(Boolean).join(' ')}
              autoComplete="off"
              className="figures h-8! text-sm"
            />
          </Field>
          <p id={`${keyId}-about`} className="-mt-1.5 text-xs break-words text-ink-muted sm:col-span-2">
            Claims name it as <span className="figures text-ink">(clearance:{watched.key?.trim() || suggestedKey})</span>.{' '}
            {keyByHand
              ? `Left empty, it is made from the name: ${suggestedKey}.`
              : 'It is made from the name and is free in this build; type your own to keep it.'}
          </p>
        </div>

        <SpecPicker form={form} error={errors.specId?.message} />

        {/* One above the other: the k box is short but its hint is long, and side by side the boxes did not line up. */}
        <div className="flex flex-col gap-3">
          <Field
            label="Coverage factor k (optional)"
            error={errors.coverageFactor?.message}
            hint="Leave empty for a 95 % interval worked out from the readings (Student's t for few readings, Monte Carlo for feeler brackets or a formula that is not linear); type a k only to fix it."
          >
            <Input {...register('coverageFactor')} inputMode="decimal" className="figures h-8! max-w-40 text-sm" />
          </Field>
          <Field label="Note" error={errors.note?.message}>
            <Textarea {...register('note')} rows={2} className="text-sm" />
          </Field>
        </div>
      </div>

      <section aria-label="Live result" className="flex min-w-0 flex-col gap-2 lg:sticky lg:top-4 lg:col-start-2 lg:row-span-2 lg:row-start-1 lg:self-start">
        <h3 className="text-sm font-semibold">Result, as you choose</h3>
        {!live ? (
          <p className="rounded-md border border-dashed border-line px-3 py-4 text-sm text-ink-muted" data-live-waiting="">
            {waitingFor ? `${waitingFor}, and ` : slotCount && mode === 'sum' ? `Pick the readings (${sum!.slots.map((s) => s.label.toLowerCase()).join(', ')}) and ` : 'Pick the readings and '}
            the result, its uncertainty and, with a spec, its verdict appear here.
          </p>
        ) : live.ok ? (
          <div aria-live="polite">
            <ClearanceResultView result={live.result} readings={values.terms.flatMap((t) => byId.get(t.readingId) ?? [])} />
          </div>
        ) : (
          <div role="alert" className="rounded-md border border-danger/50 bg-danger-wash/50 px-3 py-2 text-sm">
            <p className="font-medium">This cannot be worked out yet:</p>
            <ul className="mt-1 list-disc pl-5 break-words">
              {live.problems.map((p) => (
                <li key={p}>{p}</li>
              ))}
            </ul>
          </div>
        )}
      </section>

      <div className="flex min-w-0 flex-col gap-3 lg:col-start-1">
        {conflict === 'stale' && (
          <div role="alert" className="flex flex-wrap items-center gap-2 rounded-md border border-verdict-undecided/50 px-3 py-2 text-sm">
            <WarningIcon className="text-verdict-undecided" />
            <span className="font-medium">Saved elsewhere since you opened it.</span>
            <span className="text-ink-muted">Your change was not saved. Reload the stored version; what you chose here stays in the form.</span>
            <Button size="sm" onClick={() => void reload()} loading={reloading} loadingText="Reloading…">
              Reload
            </Button>
          </div>
        )}
        {conflict === 'reloaded' && (
          <p role="status" className="text-sm text-ink-muted">
            Reloaded: the list shows the version saved elsewhere. Save puts this form over it; Cancel keeps that version.
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
            {clearance ? 'Save changes' : 'Save result'}
          </Button>
          <Button variant="quiet" onClick={() => onDone(null)}>
            Cancel
          </Button>
        </div>
      </div>
    </form>
  );
}

/** A formula shown as written, wrapping where it must so a long one never scrolls the page sideways. */
function FormulaText({ label, children }: { label: string; children: ReactNode }) {
  return (
    <p className="text-sm">
      <span className="text-ink-muted">{label}:</span>{' '}
      <code className="figures rounded-sm bg-paper-2 px-1 py-0.5 text-xs break-all">{children}</code>
    </p>
  );
}

/** Search the spec library, attach one, pick its version; its source is shown beside it. */
function SpecPicker({ form, error }: { form: UseFormReturn<ClearanceFormValues>; error?: string }) {
  const { setValue, control, formState } = form;
  const specId = useWatch({ control, name: 'specId' });
  const specVersionId = useWatch({ control, name: 'specVersionId' });
  const [q, setQ] = useState('');
  const deferredQ = useDeferredValue(q);
  const searchId = useId();
  const versionId = useId();
  const spec = useQuery({ ...clearanceSpecQueries.detail(Number(specId)), enabled: Boolean(specId) });
  const results = useQuery({ ...clearanceSpecQueries.search(deferredQ), enabled: !specId });

  // The version first: checking the spec field looks at both, and must see the pair.
  function attach(id: number, latestVersionId: number) {
    setValue('specVersionId', String(latestVersionId), { shouldDirty: true });
    setValue('specId', String(id), { shouldDirty: true, shouldValidate: formState.isSubmitted });
  }

  function detach() {
    setValue('specVersionId', '', { shouldDirty: true });
    setValue('specId', '', { shouldDirty: true, shouldValidate: formState.isSubmitted });
  }

  return (
    <fieldset className="flex flex-col gap-2 rounded-md border border-rule p-3" data-spec-picker="">
      <legend className="px-1 text-sm font-medium">Spec to judge it against</legend>
      {specId ? (
        spec.isPending ? (
          <LoadingState label="Loading the spec…" className="py-2" />
        ) : !spec.data ? (
          <ErrorState title="The spec could not be loaded" error={spec.error} onRetry={() => void spec.refetch()} retrying={spec.isRefetching} />
        ) : (
          <div className="flex flex-col gap-2">
            <div className="flex flex-wrap items-start justify-between gap-2">
              <div className="min-w-0">
                <p className="text-sm font-medium">{spec.data.name}</p>
                {spec.data.appliesTo && <p className="text-xs text-ink-muted">{spec.data.appliesTo}</p>}
              </div>
              <Button size="sm" variant="quiet" onClick={detach}>
                Remove spec
              </Button>
            </div>
            <div className="flex flex-col gap-1">
              <label htmlFor={versionId} className="text-sm font-medium">
                Version
              </label>
              <Select id={versionId} size="sm" value={specVersionId} onChange={(e) => {
                  setValue('specVersionId', e.target.value, { shouldDirty: true });
                  if (formState.isSubmitted) void form.trigger('specId');
                }}
              >
                {(spec.data.versions ?? [spec.data.latest]).map((v) => (
                  <option key={v.id} value={v.id}>
                    v{v.version}
                    {v.id === spec.data.latest.id ? ' (latest)' : ''} · {versionSummary(v)}
                  </option>
                ))}
              </Select>
            </div>
            {(() => {
              const v = (spec.data.versions ?? [spec.data.latest]).find((x) => String(x.id) === specVersionId);
              if (!v) return null;
              return (
                <p className="text-xs text-ink-muted">
                  <span className="figures text-ink">{versionSummary(v)}</span>
                  <br />
                  Source, {specSourceWords[v.source.kind] ?? v.source.kind}: {v.source.text}
                  {v.id !== spec.data.latest.id && <span className="block text-verdict-undecided">A newer version (v{spec.data.latest.version}) is in the library.</span>}
                </p>
              );
            })()}
          </div>
        )
      ) : (
        <>
          <div className="flex flex-col gap-1">
            <label htmlFor={searchId} className="text-sm font-medium">
              Search the spec library
            </label>
            <Input id={searchId} type="search" value={q} onChange={(e) => setQ(e.target.value)} placeholder="e.g. end float, oil pump" className="h-8! text-sm" />
          </div>
          {results.isPending ? (
            <LoadingState label="Searching…" className="py-2" />
          ) : !results.data ? (
            <ErrorState title="The library could not be searched" error={results.error} onRetry={() => void results.refetch()} retrying={results.isRefetching} />
          ) : results.data.length === 0 ? (
            <EmptyState title={deferredQ ? `No spec matches “${deferredQ}”` : 'The library is empty'} className="px-3 py-3">
              Try other words, or add the spec in the spec library with the source of its figures. Without a spec the clearance is
              worked out but not judged.
            </EmptyState>
          ) : (
            <ul className="flex max-h-64 flex-col divide-y divide-rule overflow-auto rounded-md border border-rule" aria-label="Specs found">
              {results.data.map((s) => (
                <li key={s.id} className="flex items-start justify-between gap-2 px-2 py-1.5">
                  <div className="min-w-0 text-xs">
                    <p className="text-sm font-medium">
                      {s.name} <span className="font-normal text-ink-muted">v{s.latest.version}</span>
                    </p>
                    <p className="figures">{versionSummary(s.latest)}</p>
                    <p className="text-ink-muted">
                      {specSourceWords[s.latest.source.kind] ?? s.latest.source.kind}: {s.latest.source.text}
                    </p>
                  </div>
                  <Button size="sm" onClick={() => attach(s.id, s.latest.id)} aria-label={`Use ${s.name}`}>
                    Use
                  </Button>
                </li>
              ))}
            </ul>
          )}
        </>
      )}
      {error && (
        <p className="flex items-start gap-1.5 text-sm text-danger">
          <WarningIcon />
          <span>{error}</span>
        </p>
      )}
    </fieldset>
  );
}
