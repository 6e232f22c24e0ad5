import type { CalcResponse } from '@shared/measure/calc.schema';
import { formatUncertaintyIn, formatValue, plainNumber, uncertaintyDecimals } from '@shared/measure/format-quantity';
import { isAnyUnit, type AnyUnit } from '@shared/measure/quantities';
import { rejectWords, type Verdict } from '@shared/measure/spec';
import { Badge, VerdictBadge } from '@/components/ui/badge';
import type { CalcView } from '../lib/calc-view';
import { ResultBandPicture } from './band-picture';
import { BudgetTable } from '@/components/budget-table';
import { CalcCaution } from './calc-caution';
import { CalcSteps } from './calc-steps';

const preferredWords: Record<Verdict, string> = {
  conforms: 'Within the preferred band',
  'does-not-conform': 'Outside the preferred band',
  undecided: 'Too close to call against the preferred band',
};

function capital(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** A probability as people read it, never rounded up to a certainty. */
export function percentText(p: number): string {
  if (p > 0.9999) return '> 99.99 %';
  if (p < 0.0001) return '< 0.01 %';
  return `${(p * 100).toFixed(p > 0.999 || p < 0.001 ? 2 : 1)} %`;
}

/** The two sides of an asymmetric interval, with a digit more when two significant digits would print them alike. */
function sideTexts(below: number, above: number, unit: AnyUnit): string {
  let decimals = uncertaintyDecimals(Math.min(below, above));
  const text = (x: number, places: number) => formatValue(Math.abs(x), unit, places);
  for (let extra = 0; extra < 2 && text(below, decimals) === text(above, decimals); extra += 1) decimals += 1;
  return `−${text(below, decimals)} / +${text(above, decimals)}`;
}

/** ν_eff: ∞ when every component is Type B with no stated degrees of freedom. */
export function dofText(nu: number | null): string {
  return nu === null ? '∞' : plainNumber(nu, 3);
}

/** Which method gave the interval, in words. */
export function methodText(response: Pick<CalcResponse, 'method' | 'trials'>): string {
  const trials = response.trials === null ? '' : response.trials.toLocaleString('en-US');
  if (response.method === 'monte-carlo') return `Monte Carlo, ${trials} trials (JCGM 101)`;
  return response.trials === null ? 'GUM (JCGM 100)' : `GUM (JCGM 100), confirmed by a Monte Carlo run of ${trials} trials`;
}

export interface CalcResultProps {
  response: CalcResponse;
  view: CalcView;
  /** Where the spec's figures come from, as typed (page only). */
  source: string;
  /** A diameter reading's key, for a length result per inch / per 25 mm of it. */
  diameter: string;
}

/** The result, its interval and uncertainty, the verdict with its rule, the band picture and the warnings. */
export function CalcResult({ response, view, source, diameter }: CalcResultProps) {
  const unit: AnyUnit = isAnyUnit(response.unit) ? response.unit : '1';
  const d = view.valueDecimals;
  const [low, high] = response.coverageInterval;
  const U = response.expandedUncertainty;
  const k = response.coverageFactor;
  const pText = `${plainNumber(response.coverageProbability * 100, 4)} %`;
  const isLength = response.quantity === 'length' && unit !== 'um' && response.value_um !== null;
  const um = (n: number) => formatValue(n, 'um', uncertaintyDecimals(response.expandedUncertainty_um ?? 0));
  const verdict = response.verdict;
  const sizeOf = diameter && response.quantity === 'length' ? response.readings[diameter] : undefined;
  const perSize =
    sizeOf && sizeOf.value_um !== null && sizeOf.value_um > 0 && response.value_um !== null ? response.value_um / sizeOf.value_um : null;

  return (
    <div className="space-y-5">
      <dl className="grid grid-cols-[minmax(0,max-content)_minmax(0,1fr)] gap-x-4 gap-y-2 sm:gap-x-6">
        <dt className="text-sm text-ink-muted">Result</dt>
        <dd className="figures text-lg font-semibold" data-result-value="">
          <span className="whitespace-nowrap">{formatValue(response.value, unit, d)}</span>
          {isLength && <span className="ml-2 inline-block text-sm font-normal whitespace-nowrap text-ink-muted">{um(response.value_um!)}</span>}
        </dd>
        <dt className="text-sm text-ink-muted">{pText} interval</dt>
        <dd className="figures">
          <span className="whitespace-nowrap">{formatValue(low, unit, d)}</span> to <span className="whitespace-nowrap">{formatValue(high, unit, d)}</span>
          {view.asymmetric && (
            <Badge className="ml-2 font-sans" title="The interval reaches further on one side of the value than the other">
              asymmetric
            </Badge>
          )}
        </dd>
        {view.asymmetric && (
          <>
            <dt className="text-sm text-ink-muted">Below / above the value</dt>
            <dd className="figures whitespace-nowrap">{sideTexts(response.value - low, high - response.value, unit)}</dd>
          </>
        )}
        <dt className="text-sm text-ink-muted">Expanded uncertainty U{view.asymmetric && ' (the larger side)'}</dt>
        <dd className="figures">
          <span className="whitespace-nowrap">{view.asymmetric ? '' : '± '}{formatUncertaintyIn(U, unit)}</span>
          {isLength && response.expandedUncertainty_um !== null && (
            <span className="ml-2 inline-block text-sm whitespace-nowrap text-ink-muted">{formatUncertaintyIn(response.expandedUncertainty_um, 'um')}</span>
          )}
        </dd>
        <dt className="text-sm text-ink-muted">Coverage factor k</dt>
        <dd className="figures">{k.toFixed(2)}</dd>
        <dt className="text-sm text-ink-muted">Standard uncertainty u_c</dt>
        <dd className="figures">{formatUncertaintyIn(response.standardUncertainty, unit)}</dd>
        <dt className="text-sm text-ink-muted">Degrees of freedom ν_eff</dt>
        <dd className="figures">{dofText(response.effectiveDegreesOfFreedom)}</dd>
        <dt className="text-sm text-ink-muted">Interval from</dt>
        <dd className="text-sm">{methodText(response)}</dd>
        {response.probabilityOfConformance !== null && (
          <>
            <dt className="text-sm text-ink-muted">Probability within spec</dt>
            <dd className="figures">{percentText(response.probabilityOfConformance)}</dd>
          </>
        )}
        {perSize !== null && (
          <>
            <dt className="text-sm text-ink-muted">Per size of {diameter}</dt>
            <dd className="figures">
              {perSize.toFixed(5)} in per inch · {(perSize * 25).toFixed(4)} mm per 25 mm
            </dd>
          </>
        )}
      </dl>

      {verdict && view.band && view.limits && view.rule ? (
        <div className="space-y-3">
          <div className="flex flex-wrap items-center gap-2">
            <VerdictBadge verdict={verdict} rule={`${view.rule} rule, ${pText} interval`} />
            {response.preferredVerdict && (
              <VerdictBadge verdict={response.preferredVerdict} size="sm">
                {preferredWords[response.preferredVerdict]}
              </VerdictBadge>
            )}
            {response.rejectVerdict && (
              <VerdictBadge verdict={response.rejectVerdict} size="sm">
                {capital(rejectWords[response.rejectVerdict])}
              </VerdictBadge>
            )}
          </div>
          {view.ruleText && <p className="max-w-prose text-sm text-ink-muted">{view.ruleText}</p>}
          {source.trim() && <p className="text-sm text-ink-muted">Spec source: {source.trim()}</p>}
          <ResultBandPicture
            unit={unit}
            decimals={Math.max(d, specDecimals(view.band))}
            band={view.band}
            value={response.value}
            interval={response.coverageInterval}
            asymmetric={view.asymmetric}
            coverageFactor={k}
            coverageProbability={response.coverageProbability}
            limits={view.limits}
            verdict={verdict}
            rule={view.rule}
          />
          <CalcCaution />
        </div>
      ) : (
        <p className="text-sm text-ink-muted">No spec, so no verdict. Switch on “Judge against a spec” to see one.</p>
      )}

      {response.warnings.length > 0 && (
        <div className="rounded-md border border-line bg-paper-2/50 px-3 py-2">
          <h3 className="text-sm font-semibold">Worth knowing</h3>
          <ul className="mt-1 space-y-1 text-sm">
            {response.warnings.map((warning) => (
              <li key={warning} className="flex items-start gap-2">
                <svg viewBox="0 0 16 16" className="mt-1 size-3.5 shrink-0" aria-hidden="true">
                  <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
                  <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
                </svg>
                <span>{warning}</span>
              </li>
            ))}
          </ul>
        </div>
      )}

    </div>
  );
}

/** The uncertainty budget and the working, line by line: the builder's side of the result. */
export function CalcWorkings({ response }: { response: CalcResponse }) {
  const unit: AnyUnit = isAnyUnit(response.unit) ? response.unit : '1';
  return (
    <div className="space-y-5">
      <BudgetTable budget={response.budget} unit={unit} />
      <details>
        <summary className="cursor-pointer text-sm font-semibold">How it was worked out ({response.steps.length} steps)</summary>
        <div className="mt-2">
          <CalcSteps steps={response.steps} />
        </div>
      </details>
    </div>
  );
}

/** Decimal places the spec's own limits need to be told apart on the scale (at most 6 more). */
function specDecimals(band: NonNullable<CalcView['band']>): number {
  let most = 0;
  for (const v of [band.min, band.max, band.preferredMin, band.preferredMax, band.reject]) {
    if (v === undefined) continue;
    for (let places = 0; places <= 6; places += 1) {
      if (Math.abs(Number(v.toFixed(places)) - v) <= 1e-12 * Math.max(1, Math.abs(v))) {
        most = Math.max(most, places);
        break;
      }
    }
  }
  return most;
}
