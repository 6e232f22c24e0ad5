import { useFormContext, useWatch } from 'react-hook-form';
import { specSourceKinds } from '@shared/measure/spec.schema';
import { quantityOf, unitTable } from '@shared/measure/quantities';
import { figureTextIn } from '@shared/measure/quantity-text';
import { normaliseSpecFigures, specVersionInputSchema } from '@shared/specs/spec-library.schema';
import { BandPicture } from '@/features/calc/components/band-picture';
import { FigureInput } from '@/features/instruments/components/figure-input';
import { UnitOptions } from '@/features/instruments/components/unit-options';
import { Field, Input, Select, Textarea } from '@/components/ui/field';
import { figuresBody, type SpecFiguresValues } from '../lib/spec-form';
import { bandOf, bandSummary, isLengthVersion, specSourceKindNames } from '../lib/spec-format';

type FigureName = 'min' | 'max' | 'preferredMin' | 'preferredMax' | 'reject';

const figureLabels: Record<FigureName, { label: string; hint: string }> = {
  min: { label: 'Band from', hint: 'Smallest that is within spec. Blank for no lower limit.' },
  max: { label: 'Band to', hint: 'Largest that is within spec. Blank for no upper limit.' },
  preferredMin: { label: 'Preferred from', hint: 'Optional: the builder’s target, inside the band.' },
  preferredMax: { label: 'Preferred to', hint: 'Optional: blank takes the band’s own limit.' },
  reject: { label: 'Reject limit', hint: 'Optional: scrap or replace at or past this, outside the band.' },
};

/**
 * Unit, band, preferred band, reject limit, decision rule, source and note of one version,
 * with every length checked against the unit as it is typed and the band drawn once it is whole.
 * For forms whose values extend `SpecFiguresValues`.
 */
export function SpecFiguresFields() {
  const { register, control, formState } = useFormContext<SpecFiguresValues>();
  const errors = formState.errors;
  const values = useWatch({ control }) as SpecFiguresValues;
  const unit = values.unit;
  const symbol = unitTable[unit].symbol;
  const quantity = quantityOf(unit);

  const live = (name: FigureName) => {
    const text = values[name] ?? '';
    if (text.trim() === '') return undefined;
    const parsed = figureTextIn(text, unit);
    return parsed.ok ? undefined : parsed.message;
  };
  const figure = (name: FigureName) => (
    <Field label={symbol ? `${figureLabels[name].label} (${symbol})` : figureLabels[name].label} hint={figureLabels[name].hint} error={errors[name]?.message ?? live(name)}>
      <FigureInput unit={unit} {...register(name)} />
    </Field>
  );

  // The figures as they would be stored ("40 lb-ft" → "40"), once the whole version is valid.
  const checked = specVersionInputSchema.safeParse(figuresBody(values));
  const normal = checked.success ? normaliseSpecFigures(checked.data) : null;
  const stored = normal?.ok ? normal.figures : null;

  return (
    <div className="flex flex-col gap-4">
      <Field label="Unit" error={errors.unit?.message} hint="Every figure of this version is in this unit." className="sm:w-64">
        <Select {...register('unit', { deps: ['min', 'max', 'preferredMin', 'preferredMax', 'reject'] })}>
          <UnitOptions quantity={null} withRatio extra={unit} />
        </Select>
      </Field>
      <fieldset className="grid gap-3 rounded-md border border-rule p-3 sm:grid-cols-2">
        <legend className="px-1 text-sm font-medium">Band</legend>
        {figure('min')}
        {figure('max')}
        {figure('preferredMin')}
        {figure('preferredMax')}
        {figure('reject')}
      </fieldset>

      <fieldset>
        <legend className="text-sm font-medium">Decision rule</legend>
        <div className="mt-1 flex flex-col gap-1 text-sm">
          <label className="flex items-start gap-2">
            <input type="radio" value="guarded" {...register('rule')} className="mt-1 accent-[var(--color-accent)]" />
            <span>
              <strong className="font-medium">Guarded</strong> (ISO 14253-1): within spec only when the value is at least U inside the limits.
            </span>
          </label>
          <label className="flex items-start gap-2">
            <input type="radio" value="simple" {...register('rule')} className="mt-1 accent-[var(--color-accent)]" />
            <span>
              <strong className="font-medium">Simple</strong>: the value alone against the limits; never “too close to call”.
            </span>
          </label>
        </div>
        {errors.rule?.message && <p className="mt-1 text-sm text-danger">{errors.rule.message}</p>}
      </fieldset>

      <fieldset className="grid gap-3 rounded-md border border-rule p-3">
        <legend className="px-1 text-sm font-medium">Source</legend>
        <Field label="Kind of source" error={errors.source?.kind?.message} className="sm:w-72">
          <Select {...register('source.kind')}>
            {specSourceKinds.map((kind) => (
              <option key={kind} value={kind}>
                {specSourceKindNames[kind]}
              </option>
            ))}
          </Select>
        </Field>
        <Field
          label="Where the figures come from"
          required
          error={errors.source?.text?.message ?? errors.source?.message}
          hint="Manual and section, standard and clause, or why it is common practice."
        >
          <Input {...register('source.text')} autoComplete="off" />
        </Field>
      </fieldset>

      <Field label="Note" error={errors.note?.message} hint="Optional: conditions (cold, at 20 °C), or why the figures changed.">
        <Textarea {...register('note')} rows={2} />
      </Field>

      <div className="rounded-md border border-rule p-3" aria-live="polite">
        <p className="mb-2 text-sm font-medium">The band as entered</p>
        {stored && isLengthVersion(stored) ? (
          <BandPicture unit={stored.unit} {...pictureProps(stored)} />
        ) : stored ? (
          <p className="figures text-sm" data-band-summary="">
            {bandSummary(stored)}
          </p>
        ) : (
          <p className="text-sm text-ink-muted">
            Appears here once the figures agree: at least one band limit, every figure {quantity === 'ratio' ? 'a ratio' : `in ${unitTable[unit].name}`}, the
            preferred band inside the band and the reject limit outside it.
          </p>
        )}
      </div>
    </div>
  );
}

/** The band picture's figures for a length version. */
function pictureProps(v: Parameters<typeof bandOf>[0]) {
  const { decimals, band, preferred, rejectPm } = bandOf(v);
  return { decimals, band, preferred, rejectPm };
}
