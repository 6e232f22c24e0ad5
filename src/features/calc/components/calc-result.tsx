import type { CalcEvaluation } from '@shared/measure/calc';
import { perSize } from '@shared/measure/clearance';
import { displayDecimals, formatLength, formatNumber, formatUncertainty, symbolFor } from '@shared/measure/format';
import type { EvaluatedReading } from '@shared/measure/readings';
import { judge, judgeRejectLimit, type Verdict } from '@shared/measure/spec';
import { type LengthUnit, micrometresToPicometres } from '@shared/measure/units';
import { VerdictBadge } from '@/components/ui/badge';
import { BandPicture } from './band-picture';
import { CalcSteps } from './calc-steps';

const preferredWords: Record<Verdict, string> = {
  conforms: 'Within the preferred band',
  'does-not-conform': 'Outside the preferred band',
  undecided: 'Too close to call against the preferred band',
};

const rejectWords: Record<Verdict, string> = {
  conforms: 'Clear of the reject limit',
  'does-not-conform': 'Past the reject limit',
  undecided: 'Too close to call against the reject limit',
};

export interface CalcResultProps {
  evaluation: CalcEvaluation;
  unit: LengthUnit;
  /** Decimal places the spec's own figures were typed with, in `unit`. */
  specDecimals: number;
  preferred: { minPm?: bigint; maxPm?: bigint } | null;
  rejectPm: bigint | null;
  source: string;
  diameter: EvaluatedReading | null;
}

function both(pm: bigint, unit: LengthUnit, stepPm: bigint) {
  const own = formatLength(pm, unit, stepPm);
  return unit === 'um' ? own : `${own} · ${formatLength(pm, 'um', stepPm)}`;
}

function bothU(um: number, unit: LengthUnit) {
  const own = formatUncertainty(um, unit);
  return unit === 'um' ? own : `${own} · ${formatUncertainty(um, 'um')}`;
}

/** The clearance, its uncertainty, the verdict with its rule, the band picture and the working. */
export function CalcResult({ evaluation, unit, specDecimals, preferred, rejectPm, source, diameter }: CalcResultProps) {
  const { valuePm, standardUncertaintyUm, expandedUncertaintyUm, expandedPm, coverageFactor: k, judgement, band } = evaluation;
  const decimals = displayDecimals(evaluation.displayStepPm, unit);
  const rule = judgement?.rule ?? 'guarded';
  const preferredJudgement = judgement && preferred ? judge(valuePm, expandedPm, preferred, rule) : null;
  const rejectSide = rejectPm === null || !band ? null : band.maxPm !== undefined && rejectPm >= band.maxPm ? 'upper' : 'lower';
  const rejectJudgement = judgement && rejectSide && rejectPm !== null ? judgeRejectLimit(valuePm, expandedPm, rejectPm, rejectSide, rule) : null;
  const figure = diameter ? perSize(evaluation, diameter) : null;

  return (
    <div className="space-y-5">
      <dl className="grid gap-x-6 gap-y-2 sm:grid-cols-[max-content_1fr]">
        <dt className="text-sm text-ink-muted">Clearance</dt>
        <dd className="figures text-lg font-semibold">{both(valuePm, unit, evaluation.displayStepPm)}</dd>
        <dt className="text-sm text-ink-muted">Standard uncertainty u_c</dt>
        <dd className="figures">{bothU(standardUncertaintyUm, unit)}</dd>
        <dt className="text-sm text-ink-muted">Expanded uncertainty U (k = {k})</dt>
        <dd className="figures">± {bothU(expandedUncertaintyUm, unit)}</dd>
        {figure && (
          <>
            <dt className="text-sm text-ink-muted">Per size of {diameter?.key}</dt>
            <dd className="figures">
              {(() => {
                const perInch = formatNumber(micrometresToPicometres(figure.perInchUm), 'in', Math.max(4, decimals));
                const per25 = formatNumber(micrometresToPicometres(figure.per25mmUm), 'mm', 3);
                return `${perInch} ${symbolFor('in', perInch)} per inch · ${per25} mm per 25 mm`;
              })()}
            </dd>
          </>
        )}
      </dl>

      {judgement && band ? (
        <div className="space-y-3">
          <div className="flex flex-wrap items-center gap-2">
            <VerdictBadge verdict={judgement.verdict} rule={`${rule} rule, k = ${k}`} />
            {preferredJudgement && (
              <VerdictBadge verdict={preferredJudgement.verdict} size="sm">
                {preferredWords[preferredJudgement.verdict]}
              </VerdictBadge>
            )}
            {rejectJudgement && (
              <VerdictBadge verdict={rejectJudgement.verdict} size="sm">
                {rejectWords[rejectJudgement.verdict]}
              </VerdictBadge>
            )}
          </div>
          <p className="max-w-prose text-sm text-ink-muted">{judgement.ruleText}</p>
          {source.trim() && <p className="text-sm text-ink-muted">Spec source: {source.trim()}</p>}
          <BandPicture
            unit={unit}
            decimals={Math.max(decimals, specDecimals)}
            valuePm={valuePm}
            expandedPm={expandedPm}
            coverageFactor={k}
            band={band}
            preferred={preferred}
            rejectPm={rejectPm}
            limits={judgement.limits}
            verdict={judgement.verdict}
            rule={rule}
          />
        </div>
      ) : (
        <p className="text-sm text-ink-muted">No spec, so no verdict. Switch on “Judge against a spec” to see one.</p>
      )}

      <div>
        <h3 className="mb-2 text-sm font-semibold">How it was worked out</h3>
        <CalcSteps steps={evaluation.steps} />
      </div>
    </div>
  );
}
