import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { unitSymbols } from '@shared/measure/units';
import { BudgetTable } from '@/components/budget-table';
import {
  conformanceOf,
  coverageText,
  dofText,
  EngineWarnings,
  intervalOf,
  probabilityText,
  type CoverageFacts,
} from '@/features/clearances/components/coverage-facts';
import { cn } from '@/lib/cn';

/** How the interval was found, in plain words for a reader. */
export function methodWords(facts: CoverageFacts): string {
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
 * Nothing for a clearance judged before the engine gave these figures.
 */
export function CoverageRows({ facts, end }: { facts: CoverageFacts; end: (um: number) => string }) {
  const interval = intervalOf(facts);
  const within = conformanceOf(facts);
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
                The true clearance lies in this range with {coverageText(facts.coverageProbability!)} probability, given the readings and the instruments.
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
              The chance that the true clearance is inside the spec band (JCGM 106); the verdict follows the rule above.
            </span>
          </dd>
        </>
      )}
    </>
  );
}

/** The engine's warnings for a reader. */
export function ReaderWarnings({ facts, className }: { facts: CoverageFacts; className?: string }) {
  return <EngineWarnings warnings={facts.warnings} size="sm" {...(className && { className })} />;
}

/** "What the uncertainty is made of": the budget behind a disclosure, in the builder's units. */
export function ReaderBudget({ facts, className }: { facts: CoverageFacts; className?: string }) {
  if (!facts.budget || facts.budget.length === 0) return null;
  const symbol = unitSymbols[facts.unit];
  return (
    <details className={cn('rounded-md border border-rule px-3 py-2', className)} data-budget="">
      <summary className="cursor-pointer text-sm font-medium">What the uncertainty is made of</summary>
      <p className="mt-2 text-xs leading-relaxed text-ink-muted">
        Each source of doubt, the standard uncertainty it adds to the clearance and its share of the whole, largest first. In the builder’s
        units ({symbol}), as judged.
      </p>
      <div className="mt-2">
        <BudgetTable budget={facts.budget} unit={facts.unit} variant="reader" />
      </div>
    </details>
  );
}
