import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { unitTable, type AnyUnit } from '@shared/measure/quantities';
import { BudgetTable } from '@/components/budget-table';
import { coverageText, dofText, EngineWarnings, probabilityText, type CoverageFacts } from '@/features/clearances/components/coverage-facts';
import { cn } from '@/lib/cn';

/**
 * What a reader's panel shows of how a result was judged, whatever it measures: a published
 * result, or a workspace one in the editor's preview. Every field but the k and the verdict is
 * optional: results judged before the second engine have none of them.
 */
export type ReaderFacts = Pick<CoverageFacts, 'coverageFactor' | 'verdict' | 'method' | 'coverageProbability' | 'fixedCoverageFactor' | 'effectiveDegreesOfFreedom' | 'probabilityOfConformance' | 'warnings'> & {
  unit: AnyUnit;
  /** A length's U and interval in µm (null for another quantity, whose interval is passed to `CoverageRows`). */
  expandedUncertaintyUm?: number | null | undefined;
  intervalUm?: readonly [number, number] | undefined;
  budget?: CoverageFacts['budget'];
};

/** The probability within spec, when a spec was attached and the engine worked it out. */
function conformance(facts: ReaderFacts): number | null {
  return facts.verdict && typeof facts.probabilityOfConformance === 'number' ? facts.probabilityOfConformance : null;
}

/** A length's interval in µm, when it has any uncertainty to span. */
function intervalUmOf(facts: ReaderFacts): readonly [number, number] | null {
  return facts.intervalUm && (facts.expandedUncertaintyUm ?? 0) > 0 ? facts.intervalUm : null;
}

/** Whether `CoverageRows` has anything to show. */
export function hasCoverageRows(facts: ReaderFacts, interval?: readonly [number, number] | null): boolean {
  return (interval === undefined ? intervalUmOf(facts) : interval) !== null || conformance(facts) !== null;
}

/** How the interval was found, in plain words for a reader. */
export function methodWords(facts: ReaderFacts): string {
  const p = facts.coverageProbability !== undefined ? coverageText(facts.coverageProbability) : null;
  if (facts.fixedCoverageFactor) {
    const k = formatCoverageFactor(facts.coverageFactor);
    return `The builder chose k = ${k}: the interval reaches ${k} standard uncertainties either side of the value${p ? `, which covers about ${p} here` : ''}.`;
  }
  if (facts.method === 'monte-carlo') {
    return 'Simulated (Monte Carlo, JCGM 101): every input drawn many times from its own spread. The usual formula disagreed with the simulation, so the simulation’s interval stands.';
  }
  const nu = facts.effectiveDegreesOfFreedom;
  return nu === null || nu === undefined
    ? `The usual formula (GUM): the inputs’ uncertainties combined, widened${p ? ` to ${p}` : ''} with the normal distribution’s factor.`
    : `The usual formula (GUM): the inputs’ uncertainties combined, widened${p ? ` to ${p}` : ''} with Student’s t for ν_eff = ${dofText(nu)} degrees of freedom.`;
}

/**
 * The interval, the method and the probability within spec as dt/dd pairs for a list placed after
 * the verdict (the probability's note points up to its rule), in the reader's units through `end`.
 * A length's interval is its µm one; any other quantity passes `interval` in the unit `end`
 * reads (null when it has none). Nothing for a result judged before the engine gave these figures.
 */
export function CoverageRows({
  facts,
  end,
  interval: given,
  noun = 'clearance',
}: {
  facts: ReaderFacts;
  end: (value: number) => string;
  interval?: readonly [number, number] | null;
  /** What the figure is, in "the true … lies in this range". */
  noun?: string;
}) {
  const interval = given === undefined ? intervalUmOf(facts) : given;
  const within = conformance(facts);
  const chosen = facts.fixedCoverageFactor || facts.coverageProbability === undefined;
  return (
    <>
      {interval && (
        <>
          <dt className="text-ink-muted">{chosen ? `Interval (k = ${formatCoverageFactor(facts.coverageFactor)})` : `${coverageText(facts.coverageProbability!)} interval`}</dt>
          <dd data-interval="">
            <span className="figures whitespace-nowrap">{end(interval[0])}</span> to <span className="figures whitespace-nowrap">{end(interval[1])}</span>
            {!chosen && (
              <span className="mt-0.5 block text-xs leading-relaxed text-ink-muted">
                The true {noun} lies in this range with {coverageText(facts.coverageProbability!)} probability, given the readings and the instruments.
              </span>
            )}
          </dd>
          <dt className="text-ink-muted">How the interval was found</dt>
          <dd className="leading-relaxed">{methodWords(facts)}</dd>
        </>
      )}
      {within !== null && (
        <>
          <dt className="text-ink-muted">Probability within spec</dt>
          <dd data-probability-within="">
            <span className="figures">{probabilityText(within)}</span>
            <span className="mt-0.5 block text-xs leading-relaxed text-ink-muted">
              The chance that the true {noun} is inside the spec band (JCGM 106); the verdict follows the rule above.
            </span>
          </dd>
        </>
      )}
    </>
  );
}

/** The engine's warnings for a reader. */
export function ReaderWarnings({ facts, className }: { facts: Pick<ReaderFacts, 'warnings'>; className?: string }) {
  return <EngineWarnings warnings={facts.warnings} size="sm" {...(className && { className })} />;
}

/** "What the uncertainty is made of": the budget behind a disclosure, in the builder's units. */
export function ReaderBudget({ facts, className, noun = 'clearance' }: { facts: Pick<ReaderFacts, 'budget' | 'unit'>; className?: string; noun?: string }) {
  if (!facts.budget || facts.budget.length === 0) return null;
  const symbol = unitTable[facts.unit].symbol;
  return (
    <details className={cn('rounded-md border border-rule px-3 py-2', className)} data-budget="">
      <summary className="cursor-pointer text-sm font-medium">What the uncertainty is made of</summary>
      <p className="mt-2 text-xs leading-relaxed text-ink-muted">
        Each source of doubt, the standard uncertainty it adds to the {noun} and its share of the whole, largest first. In the builder’s
        units{symbol ? ` (${symbol})` : ''}, as judged.
      </p>
      <div className="mt-2">
        <BudgetTable budget={facts.budget} unit={facts.unit} variant="reader" />
      </div>
    </details>
  );
}
