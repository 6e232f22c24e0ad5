import { useState, type ReactNode } from 'react';
import type { EvidenceCheckDto } from '@shared/review/review.schema';
import type { ReviewSheet } from '@shared/review/review-sheet.schema';
import { unitTable, type AnyUnit } from '@shared/measure/quantities';
import { isLengthUnit, unitLabel } from '@shared/measure/units';
import { CalibrationBadge } from '@/features/instruments/components/calibration-badge';
import { ReadingWarnings, WarningIcon } from '@/features/readings/components/reading-badges';
import { enteredFigures, estimateText, readingKindWords, withReadingUnit } from '@/features/readings/lib/reading-text';
import { formatTime } from '@/features/clips/lib/clip-format';
import { calibrationFromWarnings } from '../lib/review-format';
import { CitedChecksAndJudge } from './citing-sentences';
import { EvidenceStateBadge } from './evidence-state-badge';
import type { JudgeProps } from './judge-bar';
import { HeardLine } from './heard-line';
import { MomentVideo, type ListenRequest } from './moment-video';

type SheetReading = ReviewSheet['readings'][number];

/** A unit in words: "inches (in)" for a length as before, "cubic centimetre (cc)", "degree (°)" for the others. */
function unitWords(unit: AnyUnit): string {
  if (isLengthUnit(unit)) return unitLabel(unit);
  const { name, symbol } = unitTable[unit];
  return symbol && !name.includes(`(${symbol})`) ? `${name} (${symbol})` : name;
}

/** One row of a compact fact list. */
export function Fact({ term, children }: { term: string; children: ReactNode }) {
  return (
    <>
      <dt className="text-ink-muted">{term}</dt>
      <dd className="min-w-0">{children}</dd>
    </>
  );
}

/**
 * One reading laid out for checking against the footage: the evidence still large, the clip from
 * just before the moment, the figures as typed, the instrument with its calibration and zero
 * check, the clearances that use it and the sentences that cite it.
 */
export function ReadingReview({
  item,
  checks,
  headingId,
  judge,
}: {
  item: SheetReading;
  checks: readonly EvidenceCheckDto[];
  headingId: string;
  /** The moderator's buttons; left out for the builder, who answers flags instead. */
  judge?: JudgeProps;
}) {
  const { reading, usedBy, citedIn, check, heard } = item;
  const [listen, setListen] = useState<ListenRequest | null>(null);
  const zeroMissing = reading.warnings.some((w) => w.code === 'no-zero-check');
  return (
    <div className="flex flex-col gap-4" data-review-subject={`reading:${reading.key}`}>
      <header className="flex flex-wrap items-center gap-x-3 gap-y-1">
        <h2 id={headingId} className="text-lg font-semibold">
          <span className="sr-only">Reading: </span>
          {reading.name}
        </h2>
        <span className="figures text-sm text-ink-muted">{reading.key}</span>
        <EvidenceStateBadge check={check} />
      </header>

      <div className="grid gap-3 md:grid-cols-2">
        <figure className="order-1 flex flex-col gap-1.5">
          <img
            src={reading.frameUrl}
            alt={`Evidence still of ${reading.name}: ${reading.clipTitle} at ${formatTime(reading.atMs / 1000)}`}
            className="aspect-video w-full rounded-md border border-rule bg-ink object-contain"
          />
          <figcaption className="text-xs text-ink-muted">
            Evidence still · {reading.clipTitle} at <span className="figures text-ink">{formatTime(reading.atMs / 1000)}</span>
          </figcaption>
        </figure>
        {/* On a phone the line comes straight after the still; side by side, it runs under both. */}
        <div className="order-3 md:order-2">
          <MomentVideo clipId={reading.clipId} atMs={reading.atMs} label={reading.name} listen={listen} />
        </div>
        <HeardLine heard={heard} onListen={(ms) => setListen((l) => ({ ms, n: (l?.n ?? 0) + 1 }))} className="order-2 md:order-3 md:col-span-2" />
      </div>

      <dl className="grid grid-cols-[max-content_minmax(0,1fr)] gap-x-4 gap-y-1 text-sm">
        <Fact term="As entered">
          <span className="figures text-base font-semibold" data-entered="">
            {enteredFigures(reading)}
          </span>
        </Fact>
        <Fact term="Estimate ± u">
          <span className="figures">{estimateText(reading)}</span>
        </Fact>
        <Fact term="Kind">{readingKindWords[reading.kind]}</Fact>
        <Fact term="Unit">
          {unitWords(reading.unit)}
        </Fact>
        <Fact term="Instrument">
          <span className="inline-flex flex-wrap items-center gap-2">
            {reading.instrumentName}
            <CalibrationBadge state={calibrationFromWarnings(reading.warnings)} />
          </span>
        </Fact>
        <Fact term="Zero check">
          {reading.zeroCheck ? (
            <span>
              offset <span className="figures">{withReadingUnit(reading.zeroCheck.offset, reading.zeroCheck.unit)}</span> applied, from that day’s zero check
            </span>
          ) : zeroMissing ? (
            <span className="inline-flex items-start gap-1 text-verdict-undecided">
              <WarningIcon />
              none recorded on {reading.takenOn}, so no offset was applied
            </span>
          ) : (
            <span className="text-ink-muted">{reading.kind === 'bracket' ? 'not used: blades are taken at their marked size' : 'not needed for this instrument'}</span>
          )}
        </Fact>
        <Fact term="Taken on">
          <span className="figures">{reading.takenOn}</span>
          {reading.temperatureC !== null && (
            <span>
              {' '}
              at <span className="figures">{reading.temperatureC} °C</span>
              {reading.material && <> ({reading.material}, corrected to 20 °C)</>}
            </span>
          )}
        </Fact>
        {reading.partName && <Fact term="Part">{reading.partName}</Fact>}
        <Fact term="Logged by">{reading.createdByName}</Fact>
        {reading.note && (
          <Fact term="Note">
            <span className="whitespace-pre-line">{reading.note}</span>
          </Fact>
        )}
        <Fact term="Warnings">
          <ReadingWarnings warnings={reading.warnings} />
        </Fact>
      </dl>

      <section aria-labelledby={`${headingId}-used`} className="flex flex-col gap-1">
        <h3 id={`${headingId}-used`} className="text-sm font-semibold">
          Results that use it
        </h3>
        {usedBy.length === 0 ? (
          <p className="text-sm text-ink-muted">None of the story’s results uses it.</p>
        ) : (
          <ul className="flex flex-col gap-0.5 text-sm">
            {usedBy.map((c) => (
              <li key={c.id}>
                {c.name} <span className="figures text-xs text-ink-muted">{c.key}</span>:{' '}
                <span className="figures">{c.display ?? 'cannot be worked out'}</span>
              </li>
            ))}
          </ul>
        )}
      </section>

      <CitedChecksAndJudge headingId={headingId} citedIn={citedIn} checks={checks} judge={judge} />
    </div>
  );
}
