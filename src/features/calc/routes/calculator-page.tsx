import { useDeferredValue, useMemo, useState } from 'react';
import { FormProvider, useFieldArray, useForm, useWatch } from 'react-hook-form';
import { evaluateCalc, toCalcResponse, type CalcEvaluation } from '@shared/measure/calc';
import { displayDecimals, systemOf, systemUnits, type UnitSystem } from '@shared/measure/format';
import { parseLength } from '@shared/measure/parse';
import { type LengthUnit, unitSymbols } from '@shared/measure/units';
import { Button } from '@/components/ui/button';
import { EmptyState, ErrorState } from '@/components/ui/data-states';
import { Field, Select } from '@/components/ui/field';
import { PageHeader } from '@/components/ui/page-header';
import { Panel } from '@/components/ui/panel';
import { CalcResult } from '../components/calc-result';
import { ReadingRow } from '../components/reading-row';
import { ServerCheck } from '../components/server-check';
import { SpecFields } from '../components/spec-fields';
import {
  blankReading,
  calcFormResolver,
  checkForm,
  examples,
  initialValues,
  keyFromName,
  type CalcFormValues,
  type FormIssue,
} from '../lib/calc-form';

const MAX_ROWS = 20;

function describeField(field: string, values: CalcFormValues): string {
  const match = /^readings\.(\d+)\.(\w+)$/.exec(field);
  if (match) {
    const row = values.readings[Number(match[1])];
    return `Reading ${Number(match[1]) + 1}${row?.name ? ` (${row.name})` : ''}, ${match[2]}`;
  }
  if (field.startsWith('spec.')) return `Spec, ${field.slice(5)}`;
  if (field === 'coverageFactor') return 'Coverage factor';
  return 'The clearance';
}

function specDecimalsIn(values: CalcFormValues, unit: LengthUnit): number {
  const { spec } = values;
  return [spec.min, spec.max, spec.preferredMin, spec.preferredMax, spec.reject].reduce((acc, text) => {
    const parsed = text.trim() ? parseLength(text, { defaultUnit: spec.unit }) : null;
    return parsed?.ok ? Math.max(acc, displayDecimals(parsed.length.lastPlacePm, unit)) : acc;
  }, 0);
}

/** The public clearance calculator: readings in any unit, a signed clearance, a spec, a verdict. */
export function Component() {
  const form = useForm<CalcFormValues>({ defaultValues: initialValues, resolver: calcFormResolver, mode: 'onTouched' });
  const { fields, append, remove } = useFieldArray({ control: form.control, name: 'readings' });
  const watched = useWatch({ control: form.control }) as CalcFormValues;
  const values = useDeferredValue(watched);
  const checked = useMemo(() => checkForm(values), [values]);
  const [chosenUnit, setChosenUnit] = useState<LengthUnit | null>(null);

  const evaluated = useMemo((): { evaluation: CalcEvaluation } | { error: unknown } | null => {
    if (!checked.ok) return null;
    try {
      return { evaluation: evaluateCalc(checked.request) };
    } catch (error) {
      // The request passed the schema, so this is a bug in the engine: show it, do not hide it.
      return { error };
    }
  }, [checked]);

  const autoUnit: LengthUnit = values.spec?.enabled ? values.spec.unit : (values.readings?.[0]?.unit ?? 'in');
  const unit = chosenUnit ?? autoUnit;
  const system: UnitSystem = systemOf(unit);
  const inClearance = values.readings?.some((row) => row.sign !== 'none') ?? false;

  return (
    <>
      <PageHeader
        title="Clearance calculator"
        description="Enter readings the way your instruments show them, in the units you use. Benchproof adds them up exactly, works out how sure the answer is (JCGM 100, the GUM), and judges it against your spec by the rule you choose (ISO 14253-1)."
      />
      <div className="mb-4 flex flex-wrap items-center gap-2" data-print="hide">
        <span className="text-sm text-ink-muted">Try an example:</span>
        {examples.map((example) => (
          <Button
            key={example.id}
            size="sm"
            variant="secondary"
            onClick={() => {
              form.reset(example.values);
              setChosenUnit(null);
            }}
          >
            {example.title}
          </Button>
        ))}
      </div>

      <div className="grid items-start gap-6 lg:grid-cols-[minmax(0,1.15fr)_minmax(0,1fr)]">
        <FormProvider {...form}>
          <form className="space-y-6" noValidate onSubmit={form.handleSubmit(() => undefined)}>
            <Panel title="Readings" description="Add or subtract each reading to build the clearance, e.g. bore depth − component height.">
              <div className="space-y-4">
                {fields.map((field, index) => (
                  <ReadingRow key={field.id} index={index} canRemove={fields.length > 1} onRemove={() => remove(index)} />
                ))}
                <div className="flex flex-wrap gap-2" data-print="hide">
                  <Button
                    onClick={() => append(blankReading(fields.length + 1, values.readings?.at(-1)?.unit ?? 'in'))}
                    disabled={fields.length >= MAX_ROWS}
                  >
                    Add a reading
                  </Button>
                  <Button type="submit" variant="quiet">
                    Check every box
                  </Button>
                </div>
              </div>
            </Panel>

            <Panel title="Spec" description="Limits from the manual, a standard or common practice.">
              <SpecFields />
            </Panel>

            <Panel title="Options">
              <div className="grid gap-3 sm:grid-cols-2">
                <Field label="Coverage factor k" hint="U = k × u_c. k = 2 gives about 95 % (GUM 6.3.3).">
                  <Select {...form.register('coverageFactor')}>
                    <option value="1">1</option>
                    <option value="2">2</option>
                    <option value="3">3</option>
                  </Select>
                </Field>
                <Field label="State per size of" hint="A diameter reading, for specs given per inch or per 25 mm.">
                  <Select {...form.register('diameter')}>
                    <option value="">—</option>
                    {(values.readings ?? []).map((row, i) => (
                      <option key={i} value={keyFromName(row.name, i)}>
                        {row.name || `reading ${i + 1}`}
                      </option>
                    ))}
                  </Select>
                </Field>
              </div>
            </Panel>
          </form>
        </FormProvider>

        <Panel
          title="Result"
          description="Worked out in your browser as you type."
          actions={
            <div className="flex items-center gap-2" data-print="hide">
              <Select
                size="sm"
                className="min-w-32 pr-8"
                aria-label="Measuring system"
                value={system}
                onChange={(event) => setChosenUnit(systemUnits[event.target.value as UnitSystem][0] ?? 'in')}
              >
                <option value="imperial">Imperial</option>
                <option value="metric">Metric</option>
              </Select>
              <Select size="sm" className="min-w-24 pr-8" aria-label="Show in" value={unit} onChange={(event) => setChosenUnit(event.target.value as LengthUnit)}>
                {systemUnits[system].map((u) => (
                  <option key={u} value={u}>
                    {unitSymbols[u]}
                  </option>
                ))}
              </Select>
            </div>
          }
        >
          {!inClearance ? (
            <EmptyState title="No clearance yet">Choose + or − for at least one reading to build a clearance.</EmptyState>
          ) : !checked.ok ? (
            <IssuesList issues={checked.issues} values={values} />
          ) : evaluated && 'error' in evaluated ? (
            <ErrorState
              title="The calculator failed on this input"
              error={evaluated.error}
              whatToDo="This is a fault in Benchproof, not in your readings. Tell the site admin what you entered."
            />
          ) : evaluated ? (
            <div className="space-y-6">
              <CalcResult
                evaluation={evaluated.evaluation}
                unit={unit}
                specDecimals={specDecimalsIn(values, unit)}
                preferred={
                  checked.read.extras.preferredMinPm !== undefined || checked.read.extras.preferredMaxPm !== undefined
                    ? {
                        ...((checked.read.extras.preferredMinPm ?? checked.read.extras.minPm) !== undefined && {
                          minPm: (checked.read.extras.preferredMinPm ?? checked.read.extras.minPm) as bigint,
                        }),
                        ...((checked.read.extras.preferredMaxPm ?? checked.read.extras.maxPm) !== undefined && {
                          maxPm: (checked.read.extras.preferredMaxPm ?? checked.read.extras.maxPm) as bigint,
                        }),
                      }
                    : null
                }
                rejectPm={checked.read.extras.rejectPm ?? null}
                source={values.spec?.enabled ? (values.spec.source ?? '') : ''}
                diameter={values.diameter ? (evaluated.evaluation.readings.get(values.diameter) ?? null) : null}
              />
              <ServerCheck request={checked.request} local={toCalcResponse(evaluated.evaluation)} />
            </div>
          ) : null}
        </Panel>
      </div>
    </>
  );
}

function IssuesList({ issues, values }: { issues: FormIssue[]; values: CalcFormValues }) {
  return (
    <div role="status" className="rounded-lg border border-dashed border-line px-5 py-6">
      <h3 className="text-md font-semibold">Not worked out yet</h3>
      <p className="mt-1 text-sm text-ink-muted">Fix these and the result appears here:</p>
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
