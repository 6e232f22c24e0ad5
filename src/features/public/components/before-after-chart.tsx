import { useId, type ReactNode } from 'react';
import { formatNumber, type UnitSystem } from '@shared/measure/format';
import { verdictWords, type Verdict } from '@shared/measure/spec';
import { micrometresToPicometres, type LengthUnit } from '@shared/measure/units';
import { VerdictBadge, VerdictGlyph } from '@/components/ui/badge';
import { cn } from '@/lib/cn';
import type { BandUm } from '../lib/band';
import { bandDecimals, systemDisplayUnits, systemFigure } from '../lib/figures';

/** One measurement of the same clearance at a stage of the build. */
export interface ChartPoint {
  id: string;
  /** "As supplied", "After facing". */
  label: string;
  /** A date or entry title, shown small under the label. */
  detail?: string;
  valueUm: number;
  expandedUm: number;
  verdict: Verdict | null;
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
  bandUnit,
  system,
  className,
}: {
  title: string;
  points: readonly ChartPoint[];
  band: BandUm | null;
  /** The unit the spec's band was written in (the clearances'); its limits keep those places. */
  bandUnit?: LengthUnit;
  system: UnitSystem;
  className?: string;
}) {
  const id = useId().replace(/:/g, '');
  const unit = systemDisplayUnits[system].main;
  const ends = points.flatMap((p) => [p.valueUm - p.expandedUm, p.valueUm + p.expandedUm]);
  if (band?.minUm != null) ends.push(band.minUm);
  if (band?.maxUm != null) ends.push(band.maxUm);
  const lo = Math.min(...ends);
  const hi = Math.max(...ends);
  const span = Math.max(hi - lo, 1e-6);
  const from = lo - span * 0.12;
  const to = hi + span * 0.12;
  const x = (um: number) => PAD + ((um - from) / (to - from)) * (W - 2 * PAD);
  const bandLeft = band?.minUm != null ? x(band.minUm) : PAD;
  const bandRight = band?.maxUm != null ? x(band.maxUm) : W - PAD;
  const first = points[0];
  const last = points[points.length - 1];
  const change = first && last && points.length > 1 ? last.valueUm - first.valueUm : null;
  const limitPlaces = band ? bandDecimals(band, bandUnit ?? unit, unit) : 0;
  const limitText = (um: number) => formatNumber(micrometresToPicometres(um), unit, limitPlaces);

  const strip = (children: ReactNode, label?: string) => (
    <svg viewBox={`0 0 ${W} ${H}`} className="block h-auto w-full text-ink" {...(label ? { role: 'img', 'aria-label': label } : { 'aria-hidden': true })}>
      {band && (
        <rect x={bandLeft} y={3} width={Math.max(0, bandRight - bandLeft)} height={H - 6} fill="var(--color-paper-3)" stroke="currentColor" strokeWidth="0.8" />
      )}
      {band && <rect x={bandLeft} y={3} width={Math.max(0, bandRight - bandLeft)} height={H - 6} fill={`url(#${id}-band)`} opacity="0.35" />}
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
            Change from “{first.label}” to “{last.label}”: {change >= 0 ? '+' : '−'}
            {systemFigure(Math.abs(change), 0, system).value}
          </span>
        )}
      </figcaption>
      <ol className="flex flex-col gap-3">
        {points.map((p, index) => {
          const figure = systemFigure(p.valueUm, p.expandedUm, system);
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
                  <span className="figures text-sm">{figure.main}</span>
                  {p.verdict && <VerdictBadge verdict={p.verdict} size="sm" />}
                </span>
              </div>
              {strip(
                <g className={colour}>
                  <line x1={x(p.valueUm - p.expandedUm)} x2={x(p.valueUm + p.expandedUm)} y1={MID} y2={MID} stroke="currentColor" strokeWidth="1.6" />
                  <line x1={x(p.valueUm - p.expandedUm)} x2={x(p.valueUm - p.expandedUm)} y1={MID - 4} y2={MID + 4} stroke="currentColor" strokeWidth="1.6" />
                  <line x1={x(p.valueUm + p.expandedUm)} x2={x(p.valueUm + p.expandedUm)} y1={MID - 4} y2={MID + 4} stroke="currentColor" strokeWidth="1.6" />
                  <g transform={`translate(${x(p.valueUm) - 7} ${MID - 7}) scale(0.875)`}>
                    {p.verdict ? <VerdictGlyph verdict={p.verdict} onPaper /> : <rect x="3" y="3" width="10" height="10" fill="var(--color-paper)" stroke="currentColor" strokeWidth="1.5" />}
                  </g>
                </g>,
                `${p.label}: ${figure.main}${p.verdict ? `, ${verdictWords[p.verdict]}` : ''}`,
              )}
            </li>
          );
        })}
      </ol>
      {band && (band.minUm !== null || band.maxUm !== null) && (
        <div className="relative mt-1 h-5 text-2xs text-ink-muted" aria-hidden="true">
          {band.minUm !== null && (
            <span className="figures absolute -translate-x-1/2" style={{ left: `${(x(band.minUm) / W) * 100}%` }}>
              {limitText(band.minUm)}
            </span>
          )}
          {band.maxUm !== null && (
            <span className="figures absolute -translate-x-1/2" style={{ left: `${(x(band.maxUm) / W) * 100}%` }}>
              {limitText(band.maxUm)}
            </span>
          )}
        </div>
      )}
      <p className="mt-1 text-xs text-ink-muted">
        Scale in {unit === 'in' ? 'in' : 'mm'} · grey dotted: spec band · bar: value ± U · shape: the verdict (filled circle within spec, open
        cross out of spec, half-filled diamond too close to call)
      </p>
    </figure>
  );
}
