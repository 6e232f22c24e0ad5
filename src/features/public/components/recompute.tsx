import { formatCoverageFactor } from '@shared/measure/format-quantity';
import { verdictWords } from '@shared/measure/spec';
import type { UnitSystem } from '@shared/measure/format';
import type { PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ErrorState } from '@/components/ui/data-states';
import { useServerCalc } from '@/features/calc/api/use-server-calc';
import { CalcSteps } from '@/features/calc/components/calc-steps';
import { recomputeRequest } from '../lib/recompute';
import { Figure } from './figure';

// Both figures come from the same engine; anything beyond float noise is a real difference.
function same(a: number, b: number) {
  return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));
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
  published: { valueUm: number; expandedUm: number; verdict: PublicClearance['verdict'] };
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
  const agrees =
    result &&
    result.value_um !== null &&
    result.expandedUncertainty_um !== null &&
    same(result.value_um, published.valueUm) &&
    same(result.expandedUncertainty_um, published.expandedUm) &&
    result.verdict === published.verdict;
  return (
    <div className="space-y-3" data-recompute="">
      <p className="text-sm text-ink-muted">
        The readings as the engine takes them (value, unit, the instrument’s resolution and stated uncertainty, the day’s zero
        offset){request.spec ? ', the spec’s limits and rule' : ''} and the coverage factor. Lengths are in each reading’s own unit.
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
          {result.value_um !== null && result.expandedUncertainty_um !== null && (
            <Figure valueUm={result.value_um} expandedUm={result.expandedUncertainty_um} coverageFactor={result.coverageFactor} system={system} />
          )}
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
