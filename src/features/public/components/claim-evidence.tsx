import { formatCoverageFactor, withUnit } from '@shared/measure/format-quantity';
import { useState } from 'react';
import { systemOf, type UnitSystem } from '@shared/measure/format';
import { decisionRuleText } from '@shared/measure/spec';
import { isLengthUnit } from '@shared/measure/units';
import { firstNumberDecimals, isLengthQuantity, quantityFigureIn, readerUnitFor } from '@shared/public/quantity-figures';
import { limitFacts } from '@shared/public/spec-limits';
import type { PublicClaim, PublicClearance, PublicReading } from '@shared/public/public-story.schema';
import { VerdictBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { BandPicture, ResultBandPicture } from '@/features/calc/components/band-picture';
import { CalcSteps } from '@/features/calc/components/calc-steps';
import { specSourceWords, VerdictCaution } from '@/features/clearances/components/clearance-result-view';
import { CalibrationBadge } from '@/features/instruments/components/calibration-badge';
import { formatTime } from '@/features/clips/lib/clip-format';
import { dayText, instantDay } from '@/lib/dates';
import { limitTextsFor, pictureProps, quantityPictureProps, readingShown, resultShown, systemDisplayUnits, valueWithU } from '../lib/figures';
import { Figure } from './figure';
import { MomentClip } from './moment-clip';
import { Recompute } from './recompute';
import { CoverageRows, hasCoverageRows, ReaderBudget, ReaderWarnings } from './uncertainty-evidence';

/** A figure typed in `unit`, with its symbol: lengths as before ("0.5642 in", "3 tenths"), any other as SI spaces it ("35 lbf·ft", "108°"). */
function typedIn(text: string, unit: PublicReading['unit']): string {
  if (isLengthUnit(unit)) return `${text} ${unit === 'um' ? 'µm' : unit === 'tenth' ? 'tenths' : unit}`;
  return withUnit(text, unit);
}

/** A reading's figures as the builder typed them: "0.5642 in", "passes 0.003, stops 0.004 in", "35 lbf·ft". */
export function enteredText(reading: PublicReading): string {
  const unit = reading.unit === 'um' ? 'µm' : reading.unit === 'tenth' ? 'tenths' : reading.unit;
  if (reading.kind === 'bracket') return `blade ${reading.passes ?? '?'} enters, ${reading.stops ?? '?'} does not (${unit})`;
  if (reading.kind === 'repeated') return typedIn((reading.values ?? []).join(', '), reading.unit);
  return typedIn(reading.value ?? '?', reading.unit);
}

/**
 * "Heard on the clip": the builder was heard saying the figure logged near the reading's moment
 * when it was published. Shown only when it agreed; anything else says nothing to a reader.
 */
function HeardOnClip({ reading }: { reading: PublicReading }) {
  const heard = reading.heard;
  if (heard?.state !== 'agrees') return null;
  return (
    <p className="flex items-start gap-1.5 text-xs text-ink-muted" data-heard-on-clip="">
      <svg viewBox="0 0 16 16" className="mt-0.5 size-3.5 shrink-0 text-verdict-conforms" aria-hidden="true">
        <path d="M3 6v4M6 3.5v9M9 5v6M12 2.5v11" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
      </svg>
      <span>
        {heard.source === 'display' ? 'Shown on the instrument’s display on the clip' : 'Heard on the clip'}
        {heard.words && (
          <>
            : “<span className="text-ink">{heard.words}</span>”
          </>
        )}
        {heard.atMs !== undefined && (
          <>
            {' '}
            at <span className="figures">{formatTime(heard.atMs / 1000)}</span>
          </>
        )}
        , the figure logged.
      </span>
    </p>
  );
}

/** Whether a published result is a length (older publications carry no quantity: they are). */
function isLengthResult(c: PublicClearance): boolean {
  return isLengthQuantity(c.quantity) && isLengthUnit(c.unit);
}

/** The claim's evidence in full: the clearance and its verdict, the band picture, the working, the readings and the clip. */
export function ClaimEvidence({ claim, system }: { claim: PublicClaim; system: UnitSystem }) {
  const [playing, setPlaying] = useState<number | null>(claim.readings[0]?.id ?? null);
  const active = claim.readings.find((r) => r.id === playing) ?? claim.readings[0] ?? null;
  const clearance = claim.clearance;
  const lead = clearance ?? claim.readings[0] ?? null;

  return (
    <div className="flex flex-col gap-6" data-claim-evidence={`${claim.kind}:${claim.key}`}>
      {clearance ? (
        <ClearanceFigures clearance={clearance} system={system} />
      ) : (
        claim.readings[0] && <ReadingHeadline reading={claim.readings[0]} system={system} />
      )}

      <section aria-labelledby="evidence-readings" className="flex flex-col gap-3">
        <h3 id="evidence-readings" className="text-sm font-semibold">
          {claim.readings.length === 1 ? 'The reading' : `The ${claim.readings.length} readings`}
        </h3>
        {active && <MomentClip reading={active} />}
        <ul className="flex flex-col gap-3">
          {claim.readings.map((reading) => (
            <ReadingCard
              key={reading.id}
              reading={reading}
              system={system}
              sign={clearance?.terms.find((t) => t.readingId === reading.id)?.sign}
              playing={active?.id === reading.id}
              onPlay={() => setPlaying(reading.id)}
            />
          ))}
        </ul>
      </section>

      {lead && (
        <details className="rounded-md border border-rule px-3 py-2" data-print="hide">
          <summary className="cursor-pointer text-sm font-medium">Recompute it yourself</summary>
          <div className="mt-3">
            <Recompute
              readings={claim.readings}
              clearance={clearance}
              published={{ shown: clearance ? resultShown(clearance) : readingShown(claim.readings[0]!), verdict: clearance?.verdict ?? null }}
              system={system}
            />
          </div>
        </details>
      )}

      <VerdictCaution />
    </div>
  );
}

function ClearanceFigures({ clearance, system }: { clearance: PublicClearance; system: UnitSystem }) {
  const length = isLengthResult(clearance);
  const picture =
    length && clearance.band && clearance.verdict && clearance.rule && isLengthUnit(clearance.unit)
      ? pictureProps({
          valueUm: clearance.valueUm ?? 0,
          expandedUm: clearance.expandedUncertaintyUm ?? 0,
          coverageFactor: clearance.coverageFactor,
          band: clearance.band,
          bandUnit: clearance.unit,
          verdict: clearance.verdict,
          rule: clearance.rule,
          system,
        })
      : null;
  const otherPicture =
    !length && clearance.bandInUnit && clearance.verdict && clearance.rule && clearance.value !== undefined
      ? quantityPictureProps({
          unit: clearance.unit,
          value: clearance.value,
          expandedUncertainty: clearance.expandedUncertainty ?? 0,
          interval: clearance.interval ?? [clearance.value - (clearance.expandedUncertainty ?? 0), clearance.value + (clearance.expandedUncertainty ?? 0)],
          coverageFactor: clearance.coverageFactor,
          coverageProbability: clearance.coverageProbability ?? 0.95,
          band: clearance.bandInUnit,
          verdict: clearance.verdict,
          rule: clearance.rule,
          decimals: firstNumberDecimals(clearance.display),
          system,
        })
      : null;
  const formula = clearance.formula ?? null;
  const expression =
    formula !== null
      ? `${formula}${clearance.terms.length ? `, where ${clearance.terms.map((t) => `${t.symbol ?? t.readingKey} is ${t.readingName.toLowerCase()}`).join(', ')}` : ''}`
      : clearance.terms.map((t, i) => `${t.sign === -1 ? '− ' : i === 0 ? '' : '+ '}${t.readingName.toLowerCase()}`).join(' ');
  // A gap worked out as a signed sum is a clearance; anything else (a ratio, a volume, a formula) is a result.
  const noun = length && formula === null ? 'clearance' : 'result';
  const Noun = noun === 'clearance' ? 'Clearance' : 'Result';
  const shownIn = length ? systemDisplayUnits[system].main : readerUnitFor(clearance.unit, system);
  const otherSystem = length ? isLengthUnit(clearance.unit) && systemOf(clearance.unit) !== system : shownIn !== clearance.unit;
  const limits = limitTextsFor(clearance, system);
  // One verdict, against the spec band; the preferred band and the reject limit are facts in words.
  const facts = limits ? limitFacts({ preferredVerdict: clearance.preferredVerdict, rejectVerdict: clearance.rejectVerdict }, limits) : [];
  // The interval's ends in the reader's unit, at U's place like the figure above.
  const interval = length
    ? undefined
    : clearance.interval && (clearance.expandedUncertainty ?? 0) > 0
      ? clearance.interval
      : null;
  const end = length
    ? (um: number) => valueWithU(um, clearance.expandedUncertaintyUm ?? 0, systemDisplayUnits[system].main).value
    : (v: number) => quantityFigureIn({ unit: clearance.unit, value: v, expandedUncertainty: clearance.expandedUncertainty ?? 0, decimals: null }, shownIn).value;
  return (
    <section aria-labelledby="evidence-clearance" className="flex flex-col gap-3">
      <div>
        <h3 id="evidence-clearance" className="text-sm font-semibold">
          {clearance.name}
        </h3>
        <p className="text-xs text-ink-muted">
          {Noun} = {expression}
        </p>
      </div>
      <dl className="flex flex-col gap-1 text-sm [&_dd]:mb-1.5">
        <dt className="text-ink-muted">{Noun} ± U</dt>
        <dd>
          <Figure shown={resultShown(clearance)} coverageFactor={clearance.coverageFactor} system={system} size="lg" />
        </dd>
        {!(length ? clearance.intervalUm && (clearance.expandedUncertaintyUm ?? 0) > 0 : interval) && (
          <>
            <dt className="text-ink-muted">Expanded uncertainty</dt>
            <dd className="text-sm">
              {clearance.method === undefined
                ? `U = k·u_c with k = ${formatCoverageFactor(clearance.coverageFactor)} (about 95 % coverage)`
                : clearance.fixedCoverageFactor
                  ? `U = k·u_c with k = ${formatCoverageFactor(clearance.coverageFactor)}, chosen by the builder`
                  : `U is the half-width of the ${Math.round((clearance.coverageProbability ?? 0.95) * 1000) / 10} % coverage interval, from ${
                      clearance.method === 'monte-carlo' ? 'a Monte Carlo run (JCGM 101)' : 'the GUM with Student’s t'
                    }: k = ${formatCoverageFactor(clearance.coverageFactor)}`}
            </dd>
          </>
        )}
        {otherSystem && (
          <>
            <dt className="text-ink-muted">As judged</dt>
            <dd className="figures text-sm">{clearance.display}</dd>
          </>
        )}
      </dl>

      {clearance.verdict && clearance.rule ? (
        <div className="flex flex-col gap-2" data-verdict-block="">
          <div>
            <VerdictBadge verdict={clearance.verdict} rule={`${clearance.rule} rule, k = ${formatCoverageFactor(clearance.coverageFactor)}`} />
          </div>
          {facts.length > 0 && (
            <ul className="flex flex-col gap-0.5 text-sm" aria-label="Against the preferred band and the reject limit">
              {facts.map((fact) => (
                <li key={fact} data-limit-fact="">
                  {fact}
                </li>
              ))}
            </ul>
          )}
          <p className="text-xs leading-relaxed text-ink-muted">{decisionRuleText[clearance.rule]}</p>
        </div>
      ) : (
        <p className="text-sm text-ink-muted">No spec was attached, so there is no verdict.</p>
      )}

      {hasCoverageRows(clearance, interval) && (
        <dl className="flex flex-col gap-1 text-sm [&_dd]:mb-1.5" data-coverage="">
          <CoverageRows facts={clearance} end={end} {...(interval !== undefined && { interval })} noun={noun} />
        </dl>
      )}

      <ReaderWarnings facts={clearance} />

      {clearance.spec && (
        <p className="text-sm">
          <span className="text-ink-muted">Spec: </span>
          {clearance.spec.name}, version {clearance.spec.version}
          {limits?.band && (
            <>
              {' · '}band <span className="figures">{limits.band}</span>
            </>
          )}
          <br />
          <span className="text-ink-muted">Source ({specSourceWords[clearance.spec.sourceKind] ?? clearance.spec.sourceKind}): </span>
          {clearance.spec.sourceText}
        </p>
      )}

      {picture && <BandPicture {...picture} />}
      {otherPicture && <ResultBandPicture {...otherPicture} />}

      <ReaderBudget facts={clearance} noun={noun} />

      <details className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">How it was worked out ({clearance.steps.length} steps)</summary>
        <p className="mt-2 text-xs text-ink-muted">The engine’s own working, in the builder’s units, as it was judged.</p>
        <div className="mt-2">
          <CalcSteps steps={clearance.steps} />
        </div>
      </details>

      <p className="text-xs text-ink-muted">
        Checked against the footage by {clearance.checked.byName} on {instantDay(clearance.checked.at)}.
      </p>
    </section>
  );
}

function ReadingHeadline({ reading, system }: { reading: PublicReading; system: UnitSystem }) {
  return (
    <section aria-labelledby="evidence-reading" className="flex flex-col gap-2">
      <h3 id="evidence-reading" className="text-sm font-semibold">
        {reading.name}
      </h3>
      <Figure shown={readingShown(reading)} coverageFactor={2} system={system} size="lg" />
      <details className="rounded-md border border-rule px-3 py-2">
        <summary className="cursor-pointer text-sm font-medium">How it was worked out ({reading.steps.length} steps)</summary>
        <div className="mt-2">
          <CalcSteps steps={reading.steps} />
        </div>
      </details>
    </section>
  );
}

function ReadingCard({
  reading,
  system,
  sign,
  playing,
  onPlay,
}: {
  reading: PublicReading;
  system: UnitSystem;
  sign: 1 | -1 | undefined;
  playing: boolean;
  onPlay: () => void;
}) {
  return (
    <li className="grid gap-3 rounded-md border border-rule p-3 sm:grid-cols-[8rem_minmax(0,1fr)]" data-reading={reading.key}>
      <img
        src={reading.moment.stillUrl}
        alt={`Evidence still: ${reading.name}, at ${formatTime(reading.moment.atMs / 1000)} in “${reading.moment.clipTitle}”`}
        loading="lazy"
        className="aspect-video w-full rounded-sm border border-rule bg-paper-2 object-cover"
      />
      <div className="flex min-w-0 flex-col gap-1 text-sm">
        <p className="font-medium">
          {sign !== undefined && (
            <>
              <span className="figures mr-1 text-ink-muted" aria-hidden="true">
                {sign === 1 ? '+' : '−'}
              </span>
              <span className="sr-only">{sign === 1 ? 'Added: ' : 'Subtracted: '}</span>
            </>
          )}
          {reading.name}
        </p>
        <Figure shown={readingShown(reading)} system={system} size="sm" />
        <HeardOnClip reading={reading} />
        <p className="text-xs text-ink-muted">
          As entered: <span className="figures text-ink">{enteredText(reading)}</span>
          {reading.zeroCheck && (
            <>
              {' · '}zero offset <span className="figures">{typedIn(reading.zeroCheck.offset, reading.zeroCheck.unit)}</span> taken off
            </>
          )}
          {reading.temperatureC !== null && (
            <>
              {' · '}at {reading.temperatureC} °C{reading.material ? `, ${reading.material}` : ''}, corrected to 20 °C
            </>
          )}
        </p>
        <p className="flex flex-wrap items-center gap-1.5 text-xs text-ink-muted">
          <span>{reading.instrument.name}</span>
          <CalibrationBadge state={reading.instrument.calibration} />
          <span>· taken {dayText(reading.takenOn)}</span>
        </p>
        {reading.warnings.length > 0 && (
          <ul className="text-xs text-ink">
            {reading.warnings.map((w) => (
              <li key={w.code}>⚠ {w.message}</li>
            ))}
          </ul>
        )}
        <p className="text-xs text-ink-muted">
          Checked against the footage by {reading.checked.byName} on {instantDay(reading.checked.at)}.
        </p>
        <div>
          <Button size="sm" variant={playing ? 'quiet' : 'secondary'} className="mt-1 h-7 px-2 text-xs" onClick={onPlay} aria-pressed={playing} data-print="hide">
            {playing ? 'In the player above' : 'Watch at the moment'}
            <span className="sr-only"> ({reading.name})</span>
          </Button>
        </div>
      </div>
    </li>
  );
}
