import { useFormContext, useWatch, type FieldError } from 'react-hook-form';
import { materialExpansion, materialNames } from '@shared/measure/thermal';
import { lengthUnits, unitNames } from '@shared/measure/units';
import { Button } from '@/components/ui/button';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import type { CalcFormValues } from '../lib/calc-form';

const kindLabels = {
  direct: 'Direct reading',
  bracket: 'Feeler blades',
  repeated: 'Repeated (mean)',
} as const;

const kindHints = {
  direct: 'Micrometer, depth micrometer, bore gauge: one value.',
  bracket: 'Thickest blade that enters, thinnest that does not.',
  repeated: 'The same size measured several times.',
} as const;

function errorAt(errors: unknown, ...path: (string | number)[]): string | undefined {
  let node = errors as Record<string, unknown> | undefined;
  for (const segment of path) node = node?.[segment] as Record<string, unknown> | undefined;
  return (node as FieldError | undefined)?.message;
}

/** One reading: its name, kind, unit and sign in the clearance, and the boxes its kind needs. */
export function ReadingRow({ index, onRemove, canRemove }: { index: number; onRemove: () => void; canRemove: boolean }) {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const row = useWatch({ control, name: `readings.${index}` });
  const err = (name: string) => errorAt(formState.errors, 'readings', index, name);
  const unitHint = `In ${unitNames[row.unit]} unless you type a unit, e.g. 0.0001 in.`;

  return (
    <fieldset className="rounded-md border border-rule p-3">
      <legend className="px-1 text-sm font-medium">Reading {index + 1}</legend>
      <div className="grid gap-3 sm:grid-cols-2">
        <Field label="Name" error={err('name')}>
          <Input {...register(`readings.${index}.name`)} autoComplete="off" />
        </Field>
        <Field label="Kind" hint={kindHints[row.kind]}>
          <Select {...register(`readings.${index}.kind`)}>
            {Object.entries(kindLabels).map(([value, label]) => (
              <option key={value} value={value}>
                {label}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="Unit" error={err('unit')}>
          <Select {...register(`readings.${index}.unit`)}>
            {lengthUnits.map((unit) => (
              <option key={unit} value={unit}>
                {unit === 'um' ? 'µm' : unit === 'tenth' ? 'tenths' : unit}
              </option>
            ))}
          </Select>
        </Field>
        <Field label="In the clearance">
          <Select {...register(`readings.${index}.sign`)}>
            <option value="plus">+ add</option>
            <option value="minus">− subtract</option>
            <option value="none">not used</option>
          </Select>
        </Field>
      </div>

      {row.kind === 'direct' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-2">
          <Field label="Value" hint="Type it as the instrument shows it: 0.5640 keeps its four places." error={err('value')}>
            <Input {...register(`readings.${index}.value`)} inputMode="decimal" autoComplete="off" className="figures" />
          </Field>
          <Field label="Resolution" hint="Blank: one step of the last digit you typed." error={err('resolution')}>
            <Input {...register(`readings.${index}.resolution`)} inputMode="decimal" autoComplete="off" className="figures" />
          </Field>
        </div>
      )}
      {row.kind === 'bracket' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-2">
          <Field label="Passes" hint="Thickest blade that enters." error={err('passes')}>
            <Input {...register(`readings.${index}.passes`)} inputMode="decimal" autoComplete="off" className="figures" />
          </Field>
          <Field label="Stops" hint="Thinnest blade that does not." error={err('stops')}>
            <Input {...register(`readings.${index}.stops`)} inputMode="decimal" autoComplete="off" className="figures" />
          </Field>
        </div>
      )}
      {row.kind === 'repeated' && (
        <div className="mt-3 grid gap-3 sm:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
          <Field label="Values" hint="Separated by spaces or new lines." error={err('values')}>
            <Textarea {...register(`readings.${index}.values`)} rows={3} className="figures" />
          </Field>
          <Field label="Resolution" hint="Blank: the finest last digit typed." error={err('resolution')}>
            <Input {...register(`readings.${index}.resolution`)} inputMode="decimal" autoComplete="off" className="figures" />
          </Field>
        </div>
      )}

      {row.kind === 'direct' && (
        <details className="mt-3 text-sm">
          <summary className="cursor-pointer text-ink-muted">Zero check, stated uncertainty, temperature</summary>
          <div className="mt-3 grid gap-3 sm:grid-cols-2">
            <Field label="Zero check reading" hint={`Subtracted from the value. ${unitHint}`} error={err('zeroOffset')}>
              <Input {...register(`readings.${index}.zeroOffset`)} inputMode="decimal" autoComplete="off" className="figures" />
            </Field>
            <Field label="Stated standard uncertainty" hint="From a calibration certificate; combined with the resolution." error={err('uncertainty')}>
              <Input {...register(`readings.${index}.uncertainty`)} inputMode="decimal" autoComplete="off" className="figures" />
            </Field>
            <Field label="Part temperature, °C" hint="Corrects the reading to 20 °C (ISO 1)." error={err('temperatureC')}>
              <Input {...register(`readings.${index}.temperatureC`)} inputMode="decimal" autoComplete="off" className="figures" />
            </Field>
            <Field label="Material" hint="Typical handbook figures; choose your own if you know it." error={err('material')}>
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
            {row.material === 'custom' && (
              <Field label="Expansion coefficient, per K" hint="e.g. 11.7e-6" error={err('expansionPerK')}>
                <Input {...register(`readings.${index}.expansionPerK`)} autoComplete="off" className="figures" />
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
