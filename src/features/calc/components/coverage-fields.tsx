import { useFormContext, useWatch } from 'react-hook-form';
import { COVERAGE_FACTOR_RANGE, COVERAGE_PROBABILITY_RANGE } from '@shared/measure/calc.schema';
import { Field, Input, Select } from '@/components/ui/field';
import type { CalcFormValues } from '../lib/calc-form';

/** How wide the interval is: 95 % worked out from the degrees of freedom, another probability, or a fixed k. */
export function CoverageFields() {
  const { register, control, formState } = useFormContext<CalcFormValues>();
  const mode = useWatch({ control, name: 'coverage.mode' });
  const errors = formState.errors.coverage;
  return (
    <div className="grid gap-3 sm:grid-cols-2">
      <Field
        label="Coverage"
        hint={
          mode === 'factor'
            ? 'U = k × u_c with your k; the page says what probability that gives.'
            : 'k from Student’s t for the effective degrees of freedom (GUM G.4), or a Monte Carlo run where that would mislead (JCGM 101).'
        }
      >
        <Select {...register('coverage.mode')}>
          <option value="default">95 % (worked out)</option>
          <option value="probability">another probability</option>
          <option value="factor">a fixed coverage factor k</option>
        </Select>
      </Field>
      {mode === 'probability' && (
        <Field
          label="Coverage probability, %"
          hint={`${COVERAGE_PROBABILITY_RANGE.min * 100} to ${COVERAGE_PROBABILITY_RANGE.max * 100} %.`}
          error={errors?.probability?.message}
        >
          <Input {...register('coverage.probability')} inputMode="decimal" autoComplete="off" className="figures" />
        </Field>
      )}
      {mode === 'factor' && (
        <Field label="Coverage factor k" hint={`${COVERAGE_FACTOR_RANGE.min} to ${COVERAGE_FACTOR_RANGE.max}; 2 is usual.`} error={errors?.factor?.message}>
          <Input {...register('coverage.factor')} inputMode="decimal" autoComplete="off" className="figures" />
        </Field>
      )}
    </div>
  );
}
