import { useDeferredValue, useEffect, useMemo, useState } from 'react';
import { FormProvider, useFieldArray, useForm, useWatch } from 'react-hook-form';
import type { CalcRequest } from '@shared/measure/calc.schema';
import { formulaTemplates } from '@shared/measure/formula-templates';
import { formatUncertaintyIn, formatValue } from '@shared/measure/format-quantity';
import { isAnyUnit, quantityOf, type AnyUnit, type QuantityKind } from '@shared/measure/quantities';
import { verdictWords } from '@shared/measure/spec';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState, LoadingState } from '@/components/ui/data-states';
import { Field, Select } from '@/components/ui/field';
import { PageHeader } from '@/components/ui/page-header';
import { Panel } from '@/components/ui/panel';
import { useDefaultUnits } from '@/features/auth/lib/use-default-units';
import { CalcCaution } from '../components/calc-caution';
import { CalcResult, CalcWorkings } from '../components/calc-result';
import { CoverageFields } from '../components/coverage-fields';
import { InstrumentFields, sharedInstrumentNotes } from '../components/instrument-fields';
import { ModelFields } from '../components/model-fields';
import { ReadingRow } from '../components/reading-row';
import { ServerCheck } from '../components/server-check';
import { SpecFields } from '../components/spec-fields';
import {
  applyTemplate,
  blankReading,
  calcFormResolver,
  checkForm,
  describeField,
  examples,
  fieldOfIssue,
  initialValues,
  keyFromName,
  knownQuantity,
  type CalcFormValues,
  type FormIssue,
} from '../lib/calc-form';
import type { CalcOutcome } from '../lib/calc-view';
import { useLiveCalc, type LiveCalc } from '../lib/use-live-calc';
import { nextReadingUnit, startingUnit, temperatureScaleFor } from '../lib/units-ui';

const MAX_ROWS = 20;

/** The live summary line, read out when it changes. */
function summaryOf(state: LiveCalc, formIssues: number): string {
  if (formIssues > 0) return `Not worked out yet: ${formIssues === 1 ? 'one box needs' : `${formIssues} boxes need`} fixing.`;
  switch (state.status) {
    case 'idle':
      return 'No result yet.';
    case 'working':
      return 'Working…';
    case 'refused':
      return `Not worked out: ${state.issues.length === 1 ? 'one problem' : `${state.issues.length} problems`} with the model.`;
    case 'failed':
      return 'The calculator failed on this input.';
    case 'done': {
      const { response, view } = state.outcome;
      const unit: AnyUnit = isAnyUnit(response.unit) ? response.unit : '1';
      const head = view.asymmetric
        ? `${formatValue(response.value, unit, view.valueDecimals)} (interval ${formatValue(response.coverageInterval[0], unit, view.valueDecimals)} to ${formatValue(response.coverageInterval[1], unit, view.valueDecimals)})`
        : `${formatValue(response.value, unit, view.valueDecimals)} ± ${formatUncertaintyIn(response.expandedUncertainty, unit)}`;
      return response.verdict ? `${head}: ${verdictWords[response.verdict]} (${view.rule} rule).` : `${head}.`;
    }
  }
}

/** The public calculator: readings of any quantity, a signed sum or a formula, a spec, a verdict with its uncertainty budget. */
export function Component() {
  // The signed-in builder's default units, for the units the page proposes (examples keep theirs)
  // and the scale temperatures are typed in.
  const defaults = useDefaultUnits();
  const temperatureScale = temperatureScaleFor(defaults);
  const [startValues] = useState<CalcFormValues>(() => ({ ...initialValues, temperatureScale }));
  const form = useForm<CalcFormValues>({ defaultValues: startValues, resolver: calcFormResolver, mode: 'onTouched' });
  const { fields, append, remove } = useFieldArray({ control: form.control, name: 'readings' });
  const watched = useWatch({ control: form.control }) as CalcFormValues;
  const values = useDeferredValue(watched);
  const checked = useMemo(() => checkForm(values), [values]);
  const { state: live, retry } = useLiveCalc(checked.ok ? checked.request : null);
  const [lastQuantity, setLastQuantity] = useState<string | null>(null);

  // The account's answer may arrive after the page: the boxes follow its scale.
  useEffect(() => {
    if (form.getValues('temperatureScale') !== temperatureScale) form.setValue('temperatureScale', temperatureScale);
  }, [temperatureScale, form]);

  useEffect(() => {
    if (live.status === 'done') setLastQuantity(live.outcome.response.quantity);
    // A refused model may be refused for its units: offer every unit again.
    if (live.status === 'refused') setLastQuantity(null);
  }, [live]);

  const quantity: QuantityKind | null = knownQuantity(values, lastQuantity);
  const firstUnit = values.readings?.[0]?.unit;
  // Keep the result's and the spec's units in the result's quantity when that changes.
  useEffect(() => {
    if (!quantity) return;
    const resultUnit = form.getValues('resultUnit');
    if (resultUnit && quantityOf(resultUnit) !== quantity) form.setValue('resultUnit', '');
    const specUnit = form.getValues('spec.unit');
    if (!isAnyUnit(specUnit) || quantityOf(specUnit) !== quantity) {
      form.setValue('spec.unit', resultUnit && quantityOf(resultUnit) === quantity ? resultUnit : startingUnit(quantity, firstUnit, defaults));
    }
  }, [quantity, firstUnit, form, defaults]);

  const keyOfRow = checked.read.keyOfRow;
  const instruments = (values.instruments ?? []).map((row, i) => ({ key: checked.read.keyOfInstrument[i] ?? keyFromName(row.name, i, 'i'), name: row.name }));
  const notes = sharedInstrumentNotes(values, keyOfRow);
  const noTerms = values.model === 'sum' && !(values.readings ?? []).some((row) => row.sign !== 'none');
  const formIssues = checked.ok ? [] : checked.issues;
  const engineIssues: FormIssue[] =
    live.status === 'refused' ? live.issues.map((issue) => ({ field: fieldOfIssue(issue.path, checked.read, values), message: issue.message })) : [];
  const shown: { outcome: CalcOutcome; request: CalcRequest } | null =
    live.status === 'done' ? live : live.status === 'working' ? live.previous : null;
  const working = live.status === 'working';

  return (
    <>
      <PageHeader
        title="Measurement calculator"
        description="Enter readings the way your instruments show them, in the units you use: lengths, volumes, angles, torques, pressures and more. Benchproof works the result out exactly, says how sure it is (JCGM 100, the GUM, or a Monte Carlo run, JCGM 101), and judges it against your spec by the rule you choose (ISO 14253-1)."
      />
      <CalcCaution className="mb-4" />
      <div className="mb-4 flex flex-wrap items-center gap-2" data-print="hide">
        <span className="text-sm text-ink-muted">Try an example:</span>
        {examples.map((example) => (
          <Button key={example.id} size="sm" variant="secondary" onClick={() => form.reset({ ...example.values, temperatureScale: form.getValues('temperatureScale') })}>
            {example.title}
          </Button>
        ))}
      </div>

      <div className="grid items-start gap-6 lg:grid-cols-[minmax(0,1fr)_minmax(0,1.1fr)]">
        <FormProvider {...form}>
          <form className="min-w-0 space-y-6" noValidate onSubmit={form.handleSubmit(() => undefined)}>
            <Panel
              title="Readings"
              description={values.model === 'sum' ? 'Add or subtract each reading, e.g. bore depth − component height.' : 'The formula uses each reading by its key.'}
            >
              <div className="space-y-4">
                {fields.map((field, index) => (
                  <ReadingRow
                    key={field.id}
                    index={index}
                    readingKey={keyOfRow[index] ?? keyFromName(values.readings?.[index]?.name ?? '', index)}
                    model={values.model}
                    instruments={instruments}
                    canRemove={fields.length > 1}
                    onRemove={() => remove(index)}
                  />
                ))}
                <div className="flex flex-wrap gap-2" data-print="hide">
                  <Button onClick={() => append(blankReading(fields.length + 1, nextReadingUnit(values.readings?.at(-1)?.unit, defaults)))} disabled={fields.length >= MAX_ROWS}>
                    Add a reading
                  </Button>
                  <Button type="submit" variant="quiet">
                    Check every box
                  </Button>
                </div>
              </div>
            </Panel>

            <Panel title="Instruments" description="Calibrations and makers’ accuracies, shared by every reading taken with the instrument.">
              <InstrumentFields notes={notes} />
            </Panel>

            <Panel title="Model" description="How the readings make the result.">
              <ModelFields
                formulaProblem={live.status === 'refused' ? live.issues.find((issue) => issue.path[0] === 'formula')?.message : undefined}
                readingKeys={keyOfRow}
                quantity={quantity}
                onApplyTemplate={(id) => {
                  const template = formulaTemplates.find((t) => t.id === id);
                  if (template) form.reset(applyTemplate(form.getValues(), template, defaults));
                }}
              />
            </Panel>

            <Panel title="Spec" description="Limits from the manual, a standard or common practice, in any unit of the result’s quantity.">
              <SpecFields quantity={quantity} />
            </Panel>

            <Panel title="Coverage and options">
              <div className="space-y-3">
                <CoverageFields />
                {values.model === 'sum' && quantity === 'length' && (
                  <Field label="State per size of" hint="A diameter reading, for specs given per inch or per 25 mm." className="sm:max-w-xs">
                    <Select {...form.register('diameter')}>
                      <option value="">—</option>
                      {keyOfRow.map((key, i) => (
                        <option key={`${key}-${i}`} value={key}>
                          {values.readings?.[i]?.name || key}
                        </option>
                      ))}
                    </Select>
                  </Field>
                )}
              </div>
            </Panel>
          </form>
        </FormProvider>

        <Panel
          title="Result"
          description="Worked out in your browser as you type, off the page’s thread."
          className="min-w-0"
          actions={
            working ? (
              <span className="flex items-center gap-2 text-sm text-ink-muted" aria-hidden="true">
                <span className="relative block h-0.5 w-10 overflow-hidden bg-rule">
                  <span className="absolute inset-y-0 left-0 w-1/3 animate-scribe bg-ink" />
                </span>
                working…
              </span>
            ) : undefined
          }
        >
          <p aria-live="polite" aria-atomic="true" className="figures mb-4 border-b border-rule pb-3 text-sm" data-calc-summary="">
            {summaryOf(live, noTerms ? 0 : formIssues.length)}
          </p>
          {noTerms || (values.readings ?? []).length === 0 ? (
            <EmptyState title="No result yet">
              {values.model === 'sum' ? 'Choose + or − for at least one reading to build the sum.' : 'Add a reading and write a formula over its key.'}
            </EmptyState>
          ) : formIssues.length > 0 ? (
            <IssuesList title="Not worked out yet" lead="Fix these and the result appears here:" issues={formIssues} values={values} />
          ) : live.status === 'refused' ? (
            <IssuesList title="The engine could not work this out" lead="What it said:" issues={engineIssues} values={values} />
          ) : live.status === 'failed' ? (
            <ErrorState
              title="The calculator failed on this input"
              error={live.error}
              whatToDo="This is a fault in Benchproof, not in your readings. Try again; if it keeps failing, tell the site admin what you entered."
              onRetry={retry}
            />
          ) : shown ? (
            <div className={working ? 'space-y-6 opacity-55 transition-opacity' : 'space-y-6'} aria-busy={working || undefined}>
              <CalcResult response={shown.outcome.response} view={shown.outcome.view} source={values.spec?.enabled ? (values.spec.source ?? '') : ''} diameter={values.diameter ?? ''} />
              {!working && <ServerCheck request={shown.request} local={shown.outcome.response} />}
            </div>
          ) : (
            <LoadingState label="Working it out…" />
          )}
        </Panel>
      </div>

      <Panel
        title="Uncertainty budget and working"
        description="Every component, how its standard uncertainty was found, what it adds to the result (GUM 7.2.7), and the working line by line."
        className="mt-6"
      >
        {shown ? (
          <div className={working ? 'opacity-55 transition-opacity' : undefined} aria-busy={working || undefined}>
            <CalcWorkings response={shown.outcome.response} />
          </div>
        ) : working ? (
          <LoadingState label="Working it out…" />
        ) : (
          <p className="text-sm text-ink-muted">The budget appears here once the result is worked out.</p>
        )}
      </Panel>
    </>
  );
}

function IssuesList({ title, lead, issues, values }: { title: string; lead: string; issues: FormIssue[]; values: CalcFormValues }) {
  return (
    <div className="rounded-lg border border-dashed border-line px-5 py-6">
      <h3 className="text-md font-semibold">{title}</h3>
      <p className="mt-1 text-sm text-ink-muted">{lead}</p>
      <ul className="mt-2 list-disc space-y-1 pl-5 text-sm">
        {issues.slice(0, 8).map((issue, i) => (
          <li key={i}>
            <span className="font-medium">{describeField(issue.field, values)}:</span> {issue.message}
          </li>
        ))}
        {issues.length > 8 && <li>and {issues.length - 8} more.</li>}
      </ul>
    </div>
  );
}
