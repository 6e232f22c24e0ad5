import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { isAnyUnit, quantityOf } from '@shared/measure/quantities';
import { verdictWords } from '@shared/measure/spec';
import type { UnitSystem } from '@shared/measure/format';
import type { PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ErrorState } from '@/components/ui/data-states';
import { useServerCalc } from '@/features/calc/api/use-server-calc';
import { CalcSteps } from '@/features/calc/components/calc-steps';
import type { CalcResponse } from '@shared/measure/calc.schema';
import type { ShownFigure } from '../lib/figures';
import { recomputeRequest } from '../lib/recompute';
import { Figure } from './figure';

// Both figures come from the same engine; anything beyond float noise is a real difference.
function same(a: number, b: number) {
  return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));
}

/** The calculator's answer as a figure: a length by its µm figures, any other quantity in its unit. */
function answerShown(result: CalcResponse, published: ShownFigure): ShownFigure | null {
  if (result.value_um !== null && result.expandedUncertainty_um !== null) return { quantity: 'length', valueUm: result.value_um, expandedUm: result.expandedUncertainty_um };
  if (!isAnyUnit(result.unit)) return null;
  const quantity = quantityOf(result.unit);
  if (quantity === 'length') return null;
  return { quantity, figure: { unit: result.unit, value: result.value, expandedUncertainty: result.expandedUncertainty, decimals: published.quantity !== 'length' && published.figure.unit === result.unit ? published.figure.decimals : null } };
}

/** Whether the answer is the published figure: the same value and U (in the same unit), and the same verdict. */
function agreesWith(result: CalcResponse, published: ShownFigure): boolean {
  if (published.quantity === 'length') {
    return result.value_um !== null && result.expandedUncertainty_um !== null && same(result.value_um, published.valueUm) && same(result.expandedUncertainty_um, published.expandedUm);
  }
  return result.unit === published.figure.unit && same(result.value, published.figure.value) && same(result.expandedUncertainty, published.figure.expandedUncertainty);
}

/**
 * "Recompute": the inputs as the engine takes them, and a button that runs them through
 * POST /api/calc and sets the answer beside the published one.
 */
export function Recompute({
  readings,
  clearance,
  published,
  system,
}: {
  readings: readonly PublicReading[];
  clearance: PublicClearance | null;
  /** The published figure to compare with. */
  published: { shown: ShownFigure; verdict: PublicClearance['verdict'] };
  system: UnitSystem;
}) {
  const request = recomputeRequest(readings, clearance);
  const calc = useServerCalc();
  if (!request) {
    return (
      <p className="text-sm text-ink-muted">
        This publication does not carry the engine’s inputs for every reading, so it cannot be run again here. The working above is
        the engine’s own, as judged.
      </p>
    );
  }
  const result = calc.data;
  const agrees = result && agreesWith(result, published.shown) && result.verdict === published.verdict;
  const answer = result ? answerShown(result, published.shown) : null;
  return (
    <div className="space-y-3" data-recompute="">
      <p className="text-sm text-ink-muted">
        The readings as the engine takes them (value, unit, the instrument’s resolution and stated uncertainty, the day’s zero
        offset){request.formula ? ', the formula with its constants' : ''}
        {request.spec ? ', the spec’s limits and rule' : ''} and the coverage factor. Figures are in each reading’s own unit.
      </p>
      <pre className="figures max-h-64 overflow-auto rounded-md border border-rule bg-paper-2 p-3 text-xs leading-relaxed" aria-label="Inputs sent to the calculator">
        {JSON.stringify(request, null, 2)}
      </pre>
      <div className="flex flex-wrap items-center gap-3">
        <Button onClick={() => calc.mutate(request)} loading={calc.isPending} loadingText="Working it out…">
          Run through the calculator
        </Button>
        <span className="text-xs text-ink-muted">POST /api/calc: the same engine, on Benchproof’s server.</span>
      </div>
      {calc.isError && (
        <ErrorState
          title="The calculator did not answer"
          error={calc.error}
          whatToDo="The published figures above are unaffected. Try again in a moment."
          onRetry={() => calc.mutate(request)}
        />
      )}
      {result && (
        <div className="space-y-2 rounded-md border border-rule p-3" role="status">
          <p className="text-sm font-medium">
            {agrees ? 'Same result as published:' : 'A different result from the published one — tell the site admin:'}
          </p>
          {answer && <Figure shown={answer} coverageFactor={result.coverageFactor} system={system} />}
          {result.verdict && (
            <div>
              <VerdictBadge verdict={result.verdict} size="sm" rule={clearance?.rule ? `${clearance.rule} rule, k = ${formatCoverageFactor(result.coverageFactor)}` : undefined} />
            </div>
          )}
          {!agrees && published.verdict && result.verdict !== published.verdict && (
            <p className="text-sm">
              Published verdict: {verdictWords[published.verdict]}; recomputed: {result.verdict ? verdictWords[result.verdict] : 'none'}.
            </p>
          )}
          <details>
            <summary className="cursor-pointer text-sm">The calculator’s working ({result.steps.length} steps)</summary>
            <div className="mt-2">
              <CalcSteps steps={result.steps} />
            </div>
          </details>
        </div>
      )}
    </div>
  );
}
