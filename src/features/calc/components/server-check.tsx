import type { CalcRequest, CalcResponse } from '@shared/measure/calc.schema';
import { verdictWords } from '@shared/measure/spec';
import { Button } from '@/components/ui/button';
import { ErrorState } from '@/components/ui/data-states';
import { useServerCalc } from '../api/use-server-calc';

// Both sides run the same engine with the same seeded Monte Carlo; anything beyond float noise is a real difference.
function same(a: number, b: number) {
  return a === b || Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));
}

/** Differences between the browser's answer and the server's, in words; empty when they agree. */
export function differences(local: CalcResponse, server: CalcResponse): string[] {
  const out: string[] = [];
  if (local.unit !== server.unit) out.push(`unit: here ${local.unit}, server ${server.unit}`);
  if (!same(local.value, server.value)) out.push(`value: here ${local.value} ${local.unit}, server ${server.value} ${server.unit}`);
  if (!same(local.expandedUncertainty, server.expandedUncertainty)) {
    out.push(`expanded uncertainty: here ${local.expandedUncertainty} ${local.unit}, server ${server.expandedUncertainty} ${server.unit}`);
  }
  if (local.verdict !== server.verdict) {
    out.push(`verdict: here ${local.verdict ? verdictWords[local.verdict] : 'none'}, server ${server.verdict ? verdictWords[server.verdict] : 'none'}`);
  }
  return out;
}

/** Sends the same request to POST /api/calc and says whether the server agrees with this page. */
export function ServerCheck({ request, local }: { request: CalcRequest; local: CalcResponse }) {
  const check = useServerCalc();
  const key = JSON.stringify(request);
  const checkedKey = check.variables ? JSON.stringify(check.variables) : null;
  const stale = checkedKey !== null && checkedKey !== key;

  return (
    <div className="space-y-3" data-print="hide">
      <div className="flex flex-wrap items-center gap-3">
        <Button onClick={() => check.mutate(request)} loading={check.isPending} loadingText="Asking the server…">
          Check on the server
        </Button>
        <span className="text-sm text-ink-muted">Runs the same engine on Benchproof’s server (POST /api/calc) and compares.</span>
      </div>
      {check.isError && !stale && (
        <ErrorState
          title="The server did not work it out"
          error={check.error}
          whatToDo="The result above, worked out in your browser, is unaffected. Try again in a moment."
          onRetry={() => check.mutate(request)}
        />
      )}
      {(check.isSuccess || check.isError) && stale && <p className="text-sm text-ink-muted">The inputs changed since the last check; check again.</p>}
      {check.isSuccess && !stale && (() => {
        const diff = differences(local, check.data);
        return diff.length === 0 ? (
          <p role="status" className="text-sm">
            <strong className="font-medium">The server agrees:</strong> same value, expanded uncertainty and verdict.
          </p>
        ) : (
          <div role="alert" className="text-sm">
            <strong className="font-medium">The server disagrees</strong> — please tell the site admin:
            <ul className="ml-5 list-disc">
              {diff.map((d) => (
                <li key={d}>{d}</li>
              ))}
            </ul>
          </div>
        );
      })()}
    </div>
  );
}
