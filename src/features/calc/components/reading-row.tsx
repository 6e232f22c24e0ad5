import { Controller, useFormContext, useWatch, type FieldError } from 'react-hook-form';
import { isAnyUnit, quantityOf, unitTable } from '@shared/measure/quantities';
import { materialExpansion, materialNames } from '@shared/measure/thermal';
import { Button } from '@/components/ui/button';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import type { CalcFormValues, ReadingKind } from '../lib/calc-form';
import { readingQuantities, temperatureSymbol } from '../lib/units-ui';
import { UnitSelect } from './unit-select';

const kindLabels: Record<ReadingKind, string> = {
  direct: 'Direct reading',
  repeated: 'Repeated (mean)',
  bracket: 'Feeler blades',
  blade: 'One dragging blade',
};

const kindHints: Record<ReadingKind, string> = {
  direct: 'Micrometer, depth gauge, torque wrench, gauge: one value.',
  repeated: 'The same size measured several times; the mean is used.',
  bracket: 'Thickest blade that enters, thinnest that does not.',
  blade: 'One blade that goes in with a light drag.',
};

function errorAt(errors: unknown, ...path: (string | number)[]): string | undefined {
  let node = errors as Record<string, unknown> | undefined;
  for (const segment of path) node = node?.[segment] as Record<string, unknown> | undefined;
  return (node as FieldError | undefined)?.message;
}

export interface ReadingRowProps {
  index: number;
  /** The key the engine (and a formula) knows this reading by. */
  readingKey: string;
  model: CalcFormValues['model'];
  /** Instruments named on the page: key and name as typed. */
  instruments: readonly { key: string; name: string }[];
  onRemove: () => void;
  canRemove: boolean;
}

/** One reading: its name, kind, unit, its part in the model, its instrument and the boxes its kind needs. */
export function ReadingRow({ index, readingKey, model, instruments, onRemove, canRemove }: ReadingRowProps) {
  const { register, control, formState, setValue } = useFormContext<CalcFormValues>();
  const row = useWatch({ control, name: `readings.${index}` });
  const scale = useWatch({ control, name: 'temperatureScale' }) ?? 'degC';
  const degrees = temperatureSymbol(scale);
  // An uncertainty is a difference: kelvin, or Fahrenheit degrees in a °F shop.
  const spreadUnit = scale === 'degF' ? '°F' : 'K';
  const err = (name: string) => errorAt(formState.errors, 'readings', index, name);
  const isLength = isAnyUnit(row.unit) && quantityOf(row.unit) === 'length';
  const sameAsPart = isLength && row.instrumentTemperature === 'same-as-part';
  const unitName = isAnyUnit(row.unit) ? unitTable[row.unit].name : row.unit;
  const feeler = row.kind === 'bracket' || row.kind === 'blade';
  const figureProps = { inputMode: 'decimal' as const, autoComplete: 'off', className: 'figures', spellCheck: false };
  const missingInstrument = row.instrument !== '' && !instruments.some((i) => i.key === row.instrument);

  return (
    <fieldset className="rounded-md border border-rule p-3" data-reading-row={readingKey}>
      <legend className="px-1 text-sm font-medium">
        Reading {index + 1}
        <span className="ml-2 font-normal text-ink-muted">
          key <code className="figures text-ink">{readingKey}</code>
        </span>
      </legend>
      <p className="mb-2 text-xs text-ink-muted">{row.hint || kindHints[row.kind]}</p>
      <div className="grid gap-3 sm:grid-cols-2">
        <Field label="Name" error={err('name')}>
          <Input {...register(`readings.${index}.name`)} autoComplete="off" />
        </Field>
        <Field label="Kind">
          <Select
            {...register(`readings.${index}.kind`, {
              onChange: (event: { target: { value: string } }) => {
                const kind = event.target.value;
                if ((kind === 'bracket' || kind === 'blade') && !isLength) setValue(`readings.${index}.unit`, 'in');
              },
            })}
          >
            {(Object.keys(kindLabels) as ReadingKind[]).map((kind) => (
              <option key={kind} value={kind}>
                {kindLabels[kind]}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Unit" error={err('unit')}>
          <UnitSelect quantities={feeler ? ['length'] : readingQuantities} {...register(`readings.${index}.unit`)} />
        </Field>
        {model === 'sum' && (
          <Field label="In the sum">
            <Select {...register(`readings.${index}.sign`)}>
              <option value="plus">+ add</option>
              <option value="minus">− subtract</option>
              <option value="none">not used</option>
            </Select>
          </Field>
        )}
        <Field label="Instrument" error={err('instrument')}>
          <InstrumentSelect index={index} instruments={instruments} missing={missingInstrument ? row.instrument : null} />
        </Field>
      </div>

      {row.kind === 'direct' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-2">
          <Field label="Value" hint="As shown: 0.5640 keeps its four places." error={err('value')}>
            <Input {...register(`readings.${index}.value`)} {...figureProps} />
          </Field>
          <Field label="Resolution" hint="Blank: one step of the last digit typed." error={err('resolution')}>
            <Input {...register(`readings.${index}.resolution`)} {...figureProps} />
          </Field>
        </div>
      )}
      {row.kind === 'bracket' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-2">
          <Field label="Passes" hint="Thickest blade that enters." error={err('passes')}>
            <Input {...register(`readings.${index}.passes`)} {...figureProps} />
          </Field>
          <Field label="How it went in">
            <Select {...register(`readings.${index}.passesFeel`)}>
              <option value="">not noted</option>
              <option value="slides">slides in</option>
              <option value="drags">enters with a drag</option>
            </Select>
          </Field>
          <Field label="Stops" hint="Thinnest blade that does not enter." error={err('stops')}>
            <Input {...register(`readings.${index}.stops`)} {...figureProps} />
          </Field>
          <Field label="How it stopped">
            <Select {...register(`readings.${index}.stopsFeel`)}>
              <option value="">not noted</option>
              <option value="does-not-enter">does not enter</option>
              <option value="forced">goes in only when forced</option>
            </Select>
          </Field>
        </div>
      )}
      {row.kind === 'blade' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-2">
          <Field label="Blade thickness" hint="The blade that drags." error={err('thickness')}>
            <Input {...register(`readings.${index}.thickness`)} {...figureProps} />
          </Field>
          <Field
            label="Spread ±"
            hint="How far the gap may be from the blade. Blank: ±0.0005 in, half the usual step between blades (common practice, no published source)."
            error={err('spread')}
          >
            <Input {...register(`readings.${index}.spread`)} {...figureProps} />
          </Field>
          <p className="text-xs text-ink-muted sm:col-span-2">
            Feel: <strong className="font-medium text-ink">drags</strong>. One blade is a reading only when it drags; a blade that slides
            freely or will not go in tells you only which side of it the gap lies. Use passes / stops for that.
          </p>
        </div>
      )}
      {row.kind === 'repeated' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
          <Field label="Values" hint="Separated by spaces or new lines." error={err('values')}>
            <Textarea {...register(`readings.${index}.values`)} rows={3} className="figures" spellCheck={false} />
          </Field>
          <Field label="Resolution" hint="Blank: the finest last digit typed." error={err('resolution')}>
            <Input {...register(`readings.${index}.resolution`)} {...figureProps} />
          </Field>
        </div>
      )}

      {(row.kind === 'direct' || row.kind === 'repeated') && (
        <details className="mt-3 text-sm" open={Boolean(row.zeroOffset || row.uncertainty || row.temperatureC) || undefined}>
          <summary className="cursor-pointer text-ink-muted">Zero check, stated uncertainty, temperature</summary>
          <div className="mt-3 grid gap-3 sm:grid-cols-2">
            <Field label="Zero check reading" hint={`What it showed on its setting standard, minus the standard; subtracted. In ${unitName}.`} error={err('zeroOffset')}>
              <Input {...register(`readings.${index}.zeroOffset`)} {...figureProps} />
            </Field>
            <Field label="Stated standard uncertainty" hint={`From a certificate, in ${unitName}; combined with the rest.`} error={err('uncertainty')}>
              <Input {...register(`readings.${index}.uncertainty`)} {...figureProps} />
            </Field>
            <Field
              label={`Temperature when read, ${degrees}`}
              hint={
                isLength
                  ? `Of the part. Corrects the length to 20 °C${scale === 'degF' ? ' (68 °F)' : ''} (ISO 1).`
                  : 'Kept with the reading; no correction applies to this quantity.'
              }
              error={err('temperatureC')}
            >
              <Input {...register(`readings.${index}.temperatureC`)} {...figureProps} />
            </Field>
            <Field
              label={`Its standard uncertainty u(t), ${spreadUnit}`}
              hint={sameAsPart ? 'Of the temperature part and instrument share. Blank: none counted.' : 'Blank: none counted.'}
              error={err('temperatureUncertaintyC')}
            >
              <Input {...register(`readings.${index}.temperatureUncertaintyC`)} {...figureProps} />
            </Field>
            {isLength && (
              <Field label="Part material" hint="Typical handbook figures (Callister, Table B.6); give your own if you know it." error={err('material')}>
                <Select {...register(`readings.${index}.material`)}>
                  <option value="">—</option>
                  {materialNames.map((name) => (
                    <option key={name} value={name}>
                      {materialExpansion[name].label} ({materialExpansion[name].representative}, {(materialExpansion[name].expansionPerK * 1e6).toFixed(1)}×10⁻⁶/K)
                    </option>
                  ))}
                  <option value="custom">Other: give the coefficient</option>
                </Select>
              </Field>
            )}
            {isLength && row.material === 'custom' && (
              <Field label="Expansion coefficient, per K" hint="e.g. 11.7e-6" error={err('expansionPerK')}>
                <Input {...register(`readings.${index}.expansionPerK`)} autoComplete="off" className="figures" spellCheck={false} />
              </Field>
            )}
            {isLength && (
              <Field
                label="The instrument’s temperature"
                hint="Its own: as on the Instruments panel, 20 °C when blank. The part’s: lying beside the part on the bench, it is at the part’s temperature, so one thermometer reading serves both and only how far apart they may be is uncertain (GUM H.1)."
                error={err('instrumentTemperature')}
              >
                <Select {...register(`readings.${index}.instrumentTemperature`)}>
                  <option value="">its own</option>
                  <option value="same-as-part">the part’s</option>
                </Select>
              </Field>
            )}
            {sameAsPart && (
              <Field
                label={`How far apart they may be, u(δθ), ${spreadUnit}`}
                hint="Standard uncertainty of the difference between the part’s and the instrument’s temperatures. Blank: none counted."
                error={err('temperatureDifferenceUncertaintyC')}
              >
                <Input {...register(`readings.${index}.temperatureDifferenceUncertaintyC`)} {...figureProps} />
              </Field>
            )}
          </div>
        </details>
      )}

      {canRemove && (
        <div className="mt-3 flex justify-end" data-print="hide">
          <Button variant="quiet" size="sm" onClick={onRemove}>
            Remove reading {index + 1}
          </Button>
        </div>
      )}
    </fieldset>
  );
}

function InstrumentSelect({ index, instruments, missing }: { index: number; instruments: ReadingRowProps['instruments']; missing: string | null }) {
  const { control } = useFormContext<CalcFormValues>();
  // Controlled, so a value set before its option exists (an example loading its instruments) still shows.
  return (
    <Controller
      control={control}
      name={`readings.${index}.instrument`}
      render={({ field }) => (
        <Select {...field} value={field.value ?? ''}>
          <option value="">none named</option>
          {instruments.map((instrument) => (
            <option key={instrument.key} value={instrument.key}>
              {instrument.name.trim() || instrument.key}
            </option>
          ))}
          {missing && <option value={missing}>{missing} (not in the list)</option>}
        </Select>
      )}
    />
  );
}
