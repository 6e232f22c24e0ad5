import type { BudgetLine } from '@shared/measure/calc.schema';
import { formatResult } from '@shared/measure/format';
import { formatCoverageFactor, formatValue, plainNumber, uncertaintyDecimals } from '@shared/measure/format-quantity';
import type { AnyUnit, QuantityKind } from '@shared/measure/quantities';
import type { Verdict } from '@shared/measure/spec';
import { isLengthUnit, micrometresToPicometres, type LengthUnit } from '@shared/measure/units';
import { BudgetTable } from '@/components/budget-table';
import { cn } from '@/lib/cn';

/**
 * What the second engine adds to a result (a workspace result or a published one): how the
 * interval was found, its ends, the probability within spec, the budget and the warnings. Every
 * field is optional: a result judged before it has none, and then nothing here is shown. A
 * length carries its figures in µm (the length path); any other quantity in its own unit.
 */
export interface ResultFacts {
  /** Absent on results judged before other quantities could be stored: those are lengths. */
  quantity?: QuantityKind | undefined;
  unit: AnyUnit;
  /** Lengths only (null for any other quantity). */
  valueUm: number | null;
  expandedUncertaintyUm: number | null;
  /** In `unit`, for every quantity (absent on older results). */
  value?: number | undefined;
  expandedUncertainty?: number | undefined;
  interval?: readonly [number, number] | undefined;
  coverageFactor: number;
  verdict: Verdict | null;
  method?: 'gum' | 'monte-carlo' | undefined;
  coverageProbability?: number | undefined;
  fixedCoverageFactor?: boolean | undefined;
  effectiveDegreesOfFreedom?: number | null | undefined;
  intervalUm?: readonly [number, number] | undefined;
  probabilityOfConformance?: number | null | undefined;
  budget?: readonly BudgetLine[] | undefined;
  warnings?: readonly string[] | undefined;
}

/** A length result's facts, in µm: what the public pages pass. */
export interface CoverageFacts extends ResultFacts {
  unit: LengthUnit;
  valueUm: number;
  expandedUncertaintyUm: number;
}

/** A figure of a result in its own unit at U's decimal place (GUM 7.2.6): "64.20 cc", "9.94". */
export function figureInUnit(unit: AnyUnit, expandedUncertainty: number): (x: number) => string {
  const decimals = expandedUncertainty > 0 ? uncertaintyDecimals(expandedUncertainty) : 6;
  return (x) => formatValue(x, unit, decimals);
}

/** Does a result go by the length path (µm figures)? */
function isLengthFacts(facts: Pick<ResultFacts, 'quantity' | 'unit' | 'valueUm'>): boolean {
  return (facts.quantity ?? 'length') === 'length' && isLengthUnit(facts.unit) && facts.valueUm !== null;
}

/**
 * The interval's ends, when the result carries them and has any uncertainty to span: in µm for
 * a length, in the result's own unit for any other quantity (what `endInUnit` formats).
 */
export function intervalOf(facts: ResultFacts): readonly [number, number] | null {
  if (isLengthFacts(facts)) return facts.intervalUm && (facts.expandedUncertaintyUm ?? 0) > 0 ? facts.intervalUm : null;
  return facts.interval && (facts.expandedUncertainty ?? 0) > 0 ? facts.interval : null;
}

/** A probability as people read it, never rounded up to a certainty: "99.6 %", "> 99.99 %", "< 0.01 %". */
export function probabilityText(p: number): string {
  if (p > 0.9999) return '> 99.99 %';
  if (p < 0.0001) return '< 0.01 %';
  return `${(p * 100).toFixed(p > 0.999 || p < 0.001 ? 2 : 1)} %`;
}

/** A coverage probability: "95 %", "95.45 %". */
export function coverageText(p: number): string {
  return `${plainNumber(p * 100, 4)} %`;
}

/** ν_eff: ∞ when no component's uncertainty was itself estimated from few values. */
export function dofText(nu: number | null | undefined): string {
  return nu === null || nu === undefined ? '∞' : plainNumber(nu, 3);
}

/** The probability within spec, when a spec was attached and the engine worked it out. */
export function conformanceOf(facts: ResultFacts): number | null {
  return facts.verdict && typeof facts.probabilityOfConformance === 'number' ? facts.probabilityOfConformance : null;
}

/**
 * An interval end in the result's own unit, at U's decimal place (GUM 7.2.6): "0.004622 in" from
 * µm for a length, "10.05" or "64.5 cc" from the figure in its unit for any other quantity.
 */
export function endInUnit(facts: Pick<ResultFacts, 'quantity' | 'unit' | 'valueUm' | 'expandedUncertaintyUm' | 'expandedUncertainty'>): (x: number) => string {
  const unit = facts.unit;
  if (isLengthFacts(facts) && isLengthUnit(unit)) return (um) => formatResult(micrometresToPicometres(um), facts.expandedUncertaintyUm ?? 0, unit).value;
  return figureInUnit(unit, facts.expandedUncertainty ?? 0);
}

/** The method, tersely, for builders: "Monte Carlo, JCGM 101", "GUM, t with ν_eff = 12", "k = 2 chosen". */
export function methodShort(facts: ResultFacts): string {
  if (facts.fixedCoverageFactor) {
    const about = facts.coverageProbability !== undefined ? `, about ${coverageText(facts.coverageProbability)}` : '';
    return `k = ${formatCoverageFactor(facts.coverageFactor)} chosen${about}`;
  }
  if (facts.method === 'monte-carlo') return 'Monte Carlo, JCGM 101';
  return `GUM, t with ν_eff = ${dofText(facts.effectiveDegreesOfFreedom)}`;
}

/** The engine's warnings as a small notice, a triangle and words. */
export function EngineWarnings({
  warnings,
  size = 'xs',
  className,
}: {
  warnings: readonly string[] | undefined;
  size?: 'xs' | 'sm';
  className?: string;
}) {
  if (!warnings || warnings.length === 0) return null;
  return (
    <div
      role="note"
      aria-label="Worth knowing"
      className={cn('rounded-md border border-line bg-paper-2/50 px-3 py-2', size === 'sm' ? 'text-sm leading-relaxed' : 'text-xs', className)}
    >
      <p className="font-semibold">Worth knowing</p>
      <ul className="mt-1 space-y-1">
        {warnings.map((warning) => (
          <li key={warning} className="flex items-start gap-1.5">
            <svg viewBox="0 0 16 16" className={cn('size-3.5 shrink-0', size === 'sm' ? 'mt-1' : 'mt-px')} aria-hidden="true">
              <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
              <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
            </svg>
            <span>{warning}</span>
          </li>
        ))}
      </ul>
    </div>
  );
}

/**
 * The builder's compact line under the figure: "95 % interval a to b (Monte Carlo, JCGM 101) ·
 * Probability within spec: 99.6 %", the warnings, and nothing at all for an older result.
 */
export function CoverageLine({ facts }: { facts: ResultFacts }) {
  const interval = intervalOf(facts);
  const within = conformanceOf(facts);
  if (!interval && within === null && !facts.warnings?.length) return null;
  const end = endInUnit(facts);
  return (
    <div className="flex flex-col gap-2" data-coverage="">
      {(interval || within !== null) && (
        <p className="flex flex-wrap gap-x-3 gap-y-0.5 text-sm">
          {interval && (
            <span data-interval="">
              <span className="text-ink-muted">
                {facts.fixedCoverageFactor || facts.coverageProbability === undefined ? 'Interval' : `${coverageText(facts.coverageProbability)} interval`}
              </span>{' '}
              <span className="figures whitespace-nowrap">{end(interval[0])}</span> to <span className="figures whitespace-nowrap">{end(interval[1])}</span>{' '}
              <span className="text-ink-muted">({methodShort(facts)})</span>
            </span>
          )}
          {within !== null && (
            <span data-probability-within="">
              <span className="text-ink-muted">Probability within spec:</span> <span className="figures">{probabilityText(within)}</span>
            </span>
          )}
        </p>
      )}
      <EngineWarnings warnings={facts.warnings} />
    </div>
  );
}

/** The budget behind a disclosure, in the builder's dense table. */
export function BudgetDisclosure({ facts, className }: { facts: ResultFacts; className?: string }) {
  if (!facts.budget) return null;
  const n = facts.budget.length;
  return (
    <details className={cn('rounded-md border border-rule px-3 py-2', className)} data-budget="">
      <summary className="cursor-pointer text-sm font-medium">
        Uncertainty budget ({n} {n === 1 ? 'line' : 'lines'})
      </summary>
      <div className="mt-2">
        <BudgetTable budget={facts.budget} unit={facts.unit} />
      </div>
    </details>
  );
}
