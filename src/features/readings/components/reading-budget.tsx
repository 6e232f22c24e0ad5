import type { BudgetLine } from '@shared/measure/calc.schema';
import { formatUncertaintyIn } from '@shared/measure/format-quantity';
import { factorNumber } from '@shared/measure/quantities';
import type { EvaluatedReading } from '@shared/measure/readings';
import { BudgetTable } from '@/components/budget-table';

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/**
 * One reading's components as budget lines in the reading's own unit: the sensitivity is what one
 * unit of the component moves the reading by (1 for its own-unit components, the correction
 * factor after a correction to 20 °C, ∂L/∂t for a temperature), the contribution is u in the
 * reading's unit, and the shares add up to the reading's u² (GUM eq. 10 for one input each). The
 * sources lose the reading's key (the form has no key yet) and name the instrument as the register
 * does (`instrumentNames`: the engine's `i<id>` → its name).
 */
export function readingBudgetLines(evaluated: EvaluatedReading, instrumentNames: Readonly<Record<string, string>> = {}): BudgetLine[] {
  const perUnit = factorNumber(evaluated.unit);
  const lines = evaluated.components.map((c) => {
    const effect = c.effects.filter((e) => e.reading === evaluated.key).reduce((sum, e) => sum + e.effect, 0);
    const sensitivity = effect / perUnit;
    return { c, sensitivity, contribution: sensitivity * c.standardUncertainty };
  });
  const u = Math.hypot(...lines.map((l) => l.contribution));
  const prefix = `${evaluated.key}: `;
  const rename = Object.entries(instrumentNames).map(([engine, shown]) => [new RegExp(`\\b${escapeRegExp(engine)}\\b`, 'g'), shown] as const);
  return lines.map(({ c, sensitivity, contribution }) => {
    let source = c.source.startsWith(prefix) ? c.source.slice(prefix.length) : c.source;
    for (const [pattern, shown] of rename) source = source.replace(pattern, shown);
    const instrument = c.instrument === undefined ? null : (instrumentNames[c.instrument] ?? c.instrument);
    return {
      reading: evaluated.key,
      source: source.charAt(0).toUpperCase() + source.slice(1),
      distribution: c.distribution,
      standardUncertainty: c.standardUncertainty,
      inputUnit: c.unit,
      divisor: c.divisor,
      sensitivity,
      contribution,
      degreesOfFreedom: Number.isFinite(c.degreesOfFreedom) ? c.degreesOfFreedom : null,
      share: u > 0 ? (contribution * contribution) / (u * u) : 0,
      instrument,
    };
  });
}

/**
 * The reading's own uncertainty budget under the form's live read-back: one row per component
 * (source, distribution, u in the reading's unit, ν, share of u²), in the same table the results'
 * budgets use, so a builder sees here the lines a result built on this reading will list.
 */
export function ReadingBudget({
  evaluated,
  instrumentNames,
}: {
  evaluated: EvaluatedReading;
  /** The engine's instrument names (`i<id>`) → the register's names. */
  instrumentNames?: Readonly<Record<string, string>>;
}) {
  const budget = readingBudgetLines(evaluated, instrumentNames);
  const u = formatUncertaintyIn(evaluated.standardUncertainty, evaluated.unit);
  return (
    <div className="flex flex-col gap-1" data-reading-budget="">
      <BudgetTable
        budget={budget}
        unit={evaluated.unit}
        variant="reading"
        caption={`What u = ${u} is made of, largest share first`}
        captionShown
      />
      {budget.length > 1 && (
        <p className="text-xs text-ink-muted">
          u is these in quadrature, √(Σ u²); a result built on this reading lists them again beside its other readings’.
        </p>
      )}
    </div>
  );
}
