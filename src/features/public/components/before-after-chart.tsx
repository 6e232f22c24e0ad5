import { useId, type ReactNode } from 'react';
import { formatNumber, type UnitSystem } from '@shared/measure/format';
import { formatValue } from '@shared/measure/format-quantity';
import type { AnyUnit } from '@shared/measure/quantities';
import { verdictWords, type Verdict } from '@shared/measure/spec';
import { firstNumberDecimals, quantityFigureIn, readerUnitFor } from '@shared/public/quantity-figures';
import { specLimitTextsIn, type SpecLimitsInUnit } from '@shared/public/spec-limits';
import { micrometresToPicometres, type LengthUnit } from '@shared/measure/units';
import { VerdictBadge, VerdictGlyph } from '@/components/ui/badge';
import { cn } from '@/lib/cn';
import type { BandUm } from '../lib/band';
import { bandDecimals, inUnit, shownText, systemDisplayUnits, systemFigure, unitSymbolOf, type ShownFigure } from '../lib/figures';

/** One measurement of the same result at a stage of the build. */
export interface ChartPoint {
  id: string;
  /** "As supplied", "After facing". */
  label: string;
  /** A date or entry title, shown small under the label. */
  detail?: string | undefined;
  /** The figure as published: a length in µm, any other quantity in its unit. */
  shown: ShownFigure;
  verdict: Verdict | null;
}

/** The spec's band: a length's in µm with the unit it was written in, any other quantity's in its result's unit. */
export type ChartBand = { quantity: 'length'; band: BandUm; bandUnit?: LengthUnit | undefined } | { quantity: 'other'; limits: SpecLimitsInUnit; unit: AnyUnit };

/** A point on the chart's one scale: the value, the ends of its bar, and the figure in words. */
interface Placed {
  point: ChartPoint;
  value: number;
  low: number;
  high: number;
  text: string;
}

/**
 * The chart's scale: lengths in µm, labelled in the reader's main unit; any other quantity in the
 * unit the reader's system shows it in (the first point's), every point converted into it.
 */
function scaleOf(points: readonly ChartPoint[], band: ChartBand | null, system: UnitSystem) {
  const first = points[0]?.shown;
  if (!first || first.quantity === 'length') {
    const unit = systemDisplayUnits[system].main;
    const placed: Placed[] = points.map((point) => {
      const s = point.shown.quantity === 'length' ? point.shown : { valueUm: 0, expandedUm: 0 };
      return { point, value: s.valueUm, low: s.valueUm - s.expandedUm, high: s.valueUm + s.expandedUm, text: shownText(point.shown, system).main };
    });
    const lengthBand = band?.quantity === 'length' ? band : null;
    const limitPlaces = lengthBand ? bandDecimals(lengthBand.band, lengthBand.bandUnit ?? unit, unit) : 0;
    return {
      symbol: unit === 'in' ? 'in' : 'mm',
      placed,
      min: lengthBand?.band.minUm ?? null,
      max: lengthBand?.band.maxUm ?? null,
      limitText: (um: number) => formatNumber(micrometresToPicometres(um), unit, limitPlaces),
      changeText: (um: number) => systemFigure(um, 0, system).value,
    };
  }
  const unit = readerUnitFor(first.figure.unit, system);
  const placed: Placed[] = points.map((point) => {
    const s = point.shown;
    if (s.quantity === 'length') return { point, value: 0, low: 0, high: 0, text: shownText(s, system).main };
    const value = inUnit(s.figure.value, s.figure.unit, unit);
    const u = inUnit(s.figure.expandedUncertainty, s.figure.unit, unit, true);
    return { point, value, low: value - u, high: value + u, text: quantityFigureIn(s.figure, unit).main };
  });
  const otherBand = band?.quantity === 'other' ? band : null;
  const texts = otherBand ? specLimitTextsIn(otherBand.limits, otherBand.unit, unit) : null;
  const limitPlaces = Math.max(0, ...[texts?.band, texts?.reject].map((t) => (t ? (firstNumberDecimals(t) ?? 0) : 0)));
  const valuePlaces = Math.max(0, ...placed.map((p) => firstNumberDecimals(p.text) ?? 0));
  return {
    symbol: unitSymbolOf(unit),
    placed,
    min: otherBand && otherBand.limits.min !== null ? inUnit(otherBand.limits.min, otherBand.unit, unit) : null,
    max: otherBand && otherBand.limits.max !== null ? inUnit(otherBand.limits.max, otherBand.unit, unit) : null,
    limitText: (v: number) => formatValue(v, '1', limitPlaces),
    // A change is a difference: a temperature's offset does not apply to it.
    changeText: (v: number) => formatValue(v, unit, valuePlaces),
  };
}

const verdictColour: Record<Verdict, string> = {
  conforms: 'text-verdict-conforms',
  'does-not-conform': 'text-verdict-nonconform',
  undecided: 'text-verdict-undecided',
};

const W = 320;
const H = 26;
const PAD = 10;
const MID = 13;

/**
 * Before and after: each stage on its own row, on one shared scale with the spec band, the
 * value as the verdict's shape with its ± U bar, and the figure and verdict in words beside it.
 * Shapes, hatching and text carry the meaning, so it reads in print and without colour.
 */
export function BeforeAfterChart({
  title,
  points,
  band,
  system,
  className,
}: {
  title: string;
  points: readonly ChartPoint[];
  /** The spec's band, when the points were judged against one; its limits keep the places they were written to. */
  band: ChartBand | null;
  system: UnitSystem;
  className?: string;
}) {
  const id = useId().replace(/:/g, '');
  const scale = scaleOf(points, band, system);
  const ends = scale.placed.flatMap((p) => [p.low, p.high]);
  if (scale.min !== null) ends.push(scale.min);
  if (scale.max !== null) ends.push(scale.max);
  const lo = Math.min(...ends);
  const hi = Math.max(...ends);
  const span = Math.max(hi - lo, 1e-6);
  const from = lo - span * 0.12;
  const to = hi + span * 0.12;
  const x = (v: number) => PAD + ((v - from) / (to - from)) * (W - 2 * PAD);
  const hasBand = scale.min !== null || scale.max !== null;
  const bandLeft = scale.min !== null ? x(scale.min) : PAD;
  const bandRight = scale.max !== null ? x(scale.max) : W - PAD;
  const first = scale.placed[0];
  const last = scale.placed[scale.placed.length - 1];
  const change = first && last && scale.placed.length > 1 ? last.value - first.value : null;

  const strip = (children: ReactNode, label?: string) => (
    <svg viewBox={`0 0 ${W} ${H}`} className="block h-auto w-full text-ink" {...(label ? { role: 'img', 'aria-label': label } : { 'aria-hidden': true })}>
      {hasBand && (
        <rect x={bandLeft} y={3} width={Math.max(0, bandRight - bandLeft)} height={H - 6} fill="var(--color-paper-3)" stroke="currentColor" strokeWidth="0.8" />
      )}
      {hasBand && <rect x={bandLeft} y={3} width={Math.max(0, bandRight - bandLeft)} height={H - 6} fill={`url(#${id}-band)`} opacity="0.35" />}
      {children}
    </svg>
  );

  return (
    <figure className={cn('rounded-lg border border-rule p-4', className)} data-before-after="">
      <svg width="0" height="0" className="absolute" aria-hidden="true">
        <defs>
          <pattern id={`${id}-band`} width="4" height="4" patternUnits="userSpaceOnUse">
            <circle cx="2" cy="2" r="0.6" fill="currentColor" />
          </pattern>
        </defs>
      </svg>
      <figcaption className="mb-3">
        <span className="block text-sm font-semibold">{title}</span>
        {change !== null && last && first && (
          <span className="figures block text-xs text-ink-muted">
            Change from “{first.point.label}” to “{last.point.label}”: {change >= 0 ? '+' : '−'}
            {scale.changeText(Math.abs(change))}
          </span>
        )}
      </figcaption>
      <ol className="flex flex-col gap-3">
        {scale.placed.map(({ point: p, value, low, high, text }, index) => {
          const colour = p.verdict ? verdictColour[p.verdict] : 'text-ink';
          return (
            <li key={p.id} className="flex flex-col gap-1">
              <div className="flex flex-wrap items-baseline justify-between gap-x-3 gap-y-1">
                <span className="text-sm">
                  <span className="figures mr-1.5 text-xs text-ink-muted">{index + 1}.</span>
                  <span className="font-medium">{p.label}</span>
                  {p.detail && <span className="ml-1.5 text-xs text-ink-muted">{p.detail}</span>}
                </span>
                <span className="flex flex-wrap items-center gap-2">
                  <span className="figures text-sm">{text}</span>
                  {p.verdict && <VerdictBadge verdict={p.verdict} size="sm" />}
                </span>
              </div>
              {strip(
                <g className={colour}>
                  <line x1={x(low)} x2={x(high)} y1={MID} y2={MID} stroke="currentColor" strokeWidth="1.6" />
                  <line x1={x(low)} x2={x(low)} y1={MID - 4} y2={MID + 4} stroke="currentColor" strokeWidth="1.6" />
                  <line x1={x(high)} x2={x(high)} y1={MID - 4} y2={MID + 4} stroke="currentColor" strokeWidth="1.6" />
                  <g transform={`translate(${x(value) - 7} ${MID - 7}) scale(0.875)`}>
                    {p.verdict ? <VerdictGlyph verdict={p.verdict} onPaper /> : <rect x="3" y="3" width="10" height="10" fill="var(--color-paper)" stroke="currentColor" strokeWidth="1.5" />}
                  </g>
                </g>,
                `${p.label}: ${text}${p.verdict ? `, ${verdictWords[p.verdict]}` : ''}`,
              )}
            </li>
          );
        })}
      </ol>
      {hasBand && (
        <div className="relative mt-1 h-5 text-2xs text-ink-muted" aria-hidden="true">
          {scale.min !== null && (
            <span className="figures absolute -translate-x-1/2" style={{ left: `${(x(scale.min) / W) * 100}%` }}>
              {scale.limitText(scale.min)}
            </span>
          )}
          {scale.max !== null && (
            <span className="figures absolute -translate-x-1/2" style={{ left: `${(x(scale.max) / W) * 100}%` }}>
              {scale.limitText(scale.max)}
            </span>
          )}
        </div>
      )}
      <p className="mt-1 text-xs text-ink-muted">
        {scale.symbol ? `Scale in ${scale.symbol}` : 'Scale as a ratio'} · grey dotted: spec band · bar: value ± U · shape: the verdict (filled circle within spec, open
        cross out of spec, half-filled diamond too close to call)
      </p>
    </figure>
  );
}
