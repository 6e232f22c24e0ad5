import { useId } from 'react';
import { formatNumber, formatUncertainty } from '@shared/measure/format';
import { formatUncertaintyIn } from '@shared/measure/format-quantity';
import { unitTable, type AnyUnit } from '@shared/measure/quantities';
import type { BandPm, DecisionRule, GuardedLimitsPm, Verdict } from '@shared/measure/spec';
import { verdictWords } from '@shared/measure/spec';
import { type LengthUnit, unitSymbols } from '@shared/measure/units';
import { VerdictGlyph } from '@/components/ui/badge';

interface SpecOnlyProps {
  unit: LengthUnit;
  /** Decimal places for the scale labels. */
  decimals: number;
  band: BandPm;
  preferred?: BandPm | null;
  rejectPm?: bigint | null;
}

interface MeasuredProps {
  valuePm: bigint;
  /** Expanded uncertainty U, picometres; drawn as the bar value ± U. */
  expandedPm: bigint;
  coverageFactor: number;
  /** Where the verdict changes (from the shared engine); drawn as dashed ticks. */
  limits: GuardedLimitsPm;
  verdict: Verdict;
  rule: DecisionRule;
}

/**
 * The spec's band, preferred band and reject limit, and — when `valuePm` is given — the
 * measured value with its ± U bar, verdict shape and guarded limits, all in picometres (stored
 * lengths). Without a value (a spec shown on its own) only the spec is drawn.
 */
export type BandPictureProps = SpecOnlyProps & (MeasuredProps | { [K in keyof MeasuredProps]?: undefined });

/** A band in the figures' own unit; either side may be open. */
interface NumberBand {
  min?: number;
  max?: number;
}

/** What the drawing needs, in one numeric scale with its own labels. */
interface Drawing {
  /** Symbol for "Scale in …" and the summary ("in", "cc", "°", "" for a ratio). */
  symbol: string;
  label: (n: number) => string;
  /** An uncertainty with its unit, for the summary. */
  uncertaintyText: (n: number) => string;
  band: NumberBand;
  preferred?: NumberBand | null;
  reject?: number | null;
  measured?: {
    value: number;
    /** The coverage interval; not necessarily symmetric about the value. */
    low: number;
    high: number;
    asymmetric: boolean;
    coverageFactor: number;
    /** Percent, for an asymmetric interval's caption. */
    coveragePercent?: number;
    limits: { acceptMin?: number; acceptMax?: number; rejectBelow?: number; rejectAbove?: number };
    verdict: Verdict;
    rule: DecisionRule;
  } | null;
}

// Full class names so Tailwind sees them.
const verdictColour: Record<Verdict, string> = {
  conforms: 'text-verdict-conforms',
  'does-not-conform': 'text-verdict-nonconform',
  undecided: 'text-verdict-undecided',
};

// Drawing units; the SVG scales to its box, so these are proportions, not pixels.
const W = 320;
const H = 112;
const LEFT = 14;
const RIGHT = W - 14;
const AXIS_Y = 66;
const BAND_TOP = 44;
const MARK_Y = 34;

function kText(k: number): string {
  return Number.isInteger(k) ? String(k) : k.toFixed(2);
}

/**
 * The band picture for stored lengths (picometres): a horizontal scale with the spec band, the
 * preferred band inside it, the reject limit, the measured value as a mark (shape by verdict)
 * with its ± U bar, and the guarded limits as dashed ticks.
 */
export function BandPicture(props: BandPictureProps) {
  const { unit, decimals, band, preferred, rejectPm } = props;
  const n = (pm: bigint | undefined) => (pm === undefined ? undefined : Number(pm));
  const nb = (b: BandPm): NumberBand => ({ ...(b.minPm !== undefined && { min: Number(b.minPm) }), ...(b.maxPm !== undefined && { max: Number(b.maxPm) }) });
  const measured = props.valuePm === undefined ? null : props;
  const U = measured ? Number(measured.expandedPm < 0n ? -measured.expandedPm : measured.expandedPm) : 0;
  return (
    <BandDrawing
      symbol={unitSymbols[unit]}
      label={(pm) => formatNumber(BigInt(Math.round(pm)), unit, decimals)}
      uncertaintyText={(pm) => formatUncertainty(pm / 1e6, unit)}
      band={nb(band)}
      preferred={preferred ? nb(preferred) : null}
      reject={rejectPm === undefined || rejectPm === null ? null : Number(rejectPm)}
      measured={
        measured
          ? {
              value: Number(measured.valuePm),
              low: Number(measured.valuePm) - U,
              high: Number(measured.valuePm) + U,
              asymmetric: false,
              coverageFactor: measured.coverageFactor,
              limits: {
                ...(measured.limits.acceptMinPm !== undefined && { acceptMin: n(measured.limits.acceptMinPm) }),
                ...(measured.limits.acceptMaxPm !== undefined && { acceptMax: n(measured.limits.acceptMaxPm) }),
                ...(measured.limits.rejectBelowPm !== undefined && { rejectBelow: n(measured.limits.rejectBelowPm) }),
                ...(measured.limits.rejectAbovePm !== undefined && { rejectAbove: n(measured.limits.rejectAbovePm) }),
              },
              verdict: measured.verdict,
              rule: measured.rule,
            }
          : null
      }
    />
  );
}

/** The calculator's band picture: everything in the result's unit, as the engine worked it out. */
export interface ResultBandPictureProps {
  unit: AnyUnit;
  decimals: number;
  band: { min?: number; max?: number; preferredMin?: number; preferredMax?: number; reject?: number };
  value: number;
  interval: readonly [number, number];
  asymmetric: boolean;
  coverageFactor: number;
  coverageProbability: number;
  limits: { acceptMin?: number; acceptMax?: number; rejectBelow?: number; rejectAbove?: number };
  verdict: Verdict;
  rule: DecisionRule;
}

/** The band picture of a calculator result in any quantity, with an asymmetric interval drawn as it is. */
export function ResultBandPicture(props: ResultBandPictureProps) {
  const { unit, decimals, band } = props;
  const hasPreferred = band.preferredMin !== undefined || band.preferredMax !== undefined;
  return (
    <BandDrawing
      symbol={unitTable[unit].symbol}
      label={(v) => v.toFixed(Math.max(0, Math.min(15, decimals))).replace(/^-/, '−').replace(/^−(0\.?0*)$/, '$1')}
      uncertaintyText={(u) => formatUncertaintyIn(u, unit)}
      band={{ ...(band.min !== undefined && { min: band.min }), ...(band.max !== undefined && { max: band.max }) }}
      preferred={
        hasPreferred
          ? { ...((band.preferredMin ?? band.min) !== undefined && { min: band.preferredMin ?? band.min }), ...((band.preferredMax ?? band.max) !== undefined && { max: band.preferredMax ?? band.max }) }
          : null
      }
      reject={band.reject ?? null}
      measured={{
        value: props.value,
        low: props.interval[0],
        high: props.interval[1],
        asymmetric: props.asymmetric,
        coverageFactor: props.coverageFactor,
        coveragePercent: props.coverageProbability * 100,
        limits: props.limits,
        verdict: props.verdict,
        rule: props.rule,
      }}
    />
  );
}

/**
 * Draws the band picture. Shapes, hatching and words carry the meaning, so it reads in print and
 * without colour.
 */
function BandDrawing({ symbol, label, uncertaintyText, band, preferred, reject, measured }: Drawing) {
  const id = useId().replace(/:/g, '');
  const inUnit = (text: string) => (symbol === '' ? text : symbol === '°' ? `${text}°` : `${text} ${symbol}`);
  const rejectValue = reject ?? undefined;

  // Scale: everything that must be visible, plus a margin; open sides get room for the bar.
  const points: number[] = measured ? [measured.low, measured.high, measured.value] : [];
  for (const p of [band.min, band.max, preferred?.min, preferred?.max, rejectValue, measured?.limits.rejectBelow, measured?.limits.rejectAbove]) {
    if (p !== undefined && Number.isFinite(p)) points.push(p);
  }
  if (points.length === 0) points.push(0);
  const lo = Math.min(...points);
  const hi = Math.max(...points);
  const barWidth = measured ? measured.high - measured.low : 0;
  // A spec alone with a single limit has no width of its own: give it half its size either side.
  const alone = !measured && hi === lo ? Math.abs(hi) * 0.5 : 0;
  const span = Math.max(hi - lo, barWidth * 2, alone, Math.abs(hi) * 1e-9, Number.MIN_VALUE * 1e6) || 1;
  const pad = span * 0.14;
  const from = lo - pad - (band.min === undefined ? span * 0.2 : 0);
  const to = hi + pad + (band.max === undefined ? span * 0.2 : 0);
  const x = (v: number) => LEFT + ((v - from) / (to - from)) * (RIGHT - LEFT);
  const clampText = (px: number) => Math.min(RIGHT - 4, Math.max(LEFT + 4, px));

  const bandLeft = band.min === undefined ? LEFT : x(band.min);
  const bandRight = band.max === undefined ? RIGHT : x(band.max);
  // Limit labels closer than about six characters would overprint: drop the max label a row.
  const crowded = band.min !== undefined && band.max !== undefined && x(band.max) - x(band.min) < 44;
  const specText = `spec ${band.min !== undefined ? `from ${label(band.min)} ` : ''}${band.max !== undefined ? `to ${label(band.max)} ` : ''}${symbol}`.trimEnd();
  const rejectSide = rejectValue === undefined ? null : band.max !== undefined && rejectValue >= band.max ? 'upper' : 'lower';
  const intervalText = measured
    ? measured.asymmetric
      ? `, ${measured.coveragePercent !== undefined ? `${Number(measured.coveragePercent.toPrecision(4))} % ` : ''}interval ${label(measured.low)} to ${inUnit(label(measured.high))} (asymmetric)`
      : ` ± ${uncertaintyText(Math.max(measured.value - measured.low, measured.high - measured.value))} (k = ${kText(measured.coverageFactor)})`
    : '';
  const summary = measured
    ? `Measured ${inUnit(label(measured.value))}${intervalText}; ${specText}; ${verdictWords[measured.verdict]} by the ${measured.rule} rule.`
    : `Spec alone, no measured value: ${specText.slice(5)}` +
      `${preferred ? `; preferred band ${preferred.min !== undefined ? `from ${label(preferred.min)} ` : ''}${preferred.max !== undefined ? `to ${label(preferred.max)}` : ''}`.trimEnd() : ''}` +
      `${rejectSide && rejectValue !== undefined ? `; reject ${rejectSide === 'upper' ? 'at or above' : 'at or below'} ${label(rejectValue)}` : ''}.`;

  // The reject label reads outward from its line unless that would run it off the picture
  // (about 5.6 units a character at font size 10); then it turns back over the band.
  const rejectLabelOutward = (() => {
    if (rejectValue === undefined) return true;
    const width = `reject ${label(rejectValue)}`.length * 5.6;
    return rejectSide === 'upper' ? x(rejectValue) + 3 + width <= W - 2 : x(rejectValue) - 3 - width >= 2;
  })();
  const dashed = measured
    ? [
        measured.limits.acceptMin,
        measured.limits.acceptMax,
        ...(measured.rule === 'guarded' ? [measured.limits.rejectBelow, measured.limits.rejectAbove] : []),
      ].filter((p): p is number => p !== undefined && Number.isFinite(p))
    : [];
  // Without a value the rows above the band (value label, mark) are empty: leave them out.
  const top = measured ? 0 : BAND_TOP - 12;

  return (
    <figure className="w-full" data-band-picture="">
      <svg viewBox={`0 ${top} ${W} ${H - top}`} className="block h-auto w-full text-ink" role="img" aria-labelledby={`${id}-title ${id}-desc`}>
        <title id={`${id}-title`}>Band picture</title>
        <desc id={`${id}-desc`}>{summary}</desc>
        <defs>
          <pattern id={`${id}-hatch`} width="5" height="5" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
            <line x1="0" y1="0" x2="0" y2="5" stroke="currentColor" strokeWidth="1.2" />
          </pattern>
          <pattern id={`${id}-dots`} width="4" height="4" patternUnits="userSpaceOnUse">
            <circle cx="2" cy="2" r="0.7" fill="currentColor" />
          </pattern>
        </defs>

        {/* Reject (scrap) region: hatched beyond the limit. */}
        {rejectSide && rejectValue !== undefined && (
          <g>
            <rect
              x={rejectSide === 'upper' ? x(rejectValue) : LEFT}
              y={BAND_TOP}
              width={Math.max(0, rejectSide === 'upper' ? RIGHT - x(rejectValue) : x(rejectValue) - LEFT)}
              height={AXIS_Y - BAND_TOP}
              fill={`url(#${id}-hatch)`}
              opacity="0.45"
            />
            <line x1={x(rejectValue)} x2={x(rejectValue)} y1={BAND_TOP - 6} y2={AXIS_Y + 4} stroke="currentColor" strokeWidth="2" />
            <text
              x={clampText(x(rejectValue) + (rejectLabelOutward ? (rejectSide === 'upper' ? 3 : -3) : rejectSide === 'upper' ? -3 : 3))}
              y={H - 4}
              fontSize="10"
              textAnchor={(rejectSide === 'upper') === rejectLabelOutward ? 'start' : 'end'}
              fill="currentColor"
            >
              reject {label(rejectValue)}
            </text>
          </g>
        )}

        {/* Spec band and preferred band. */}
        <rect x={bandLeft} y={BAND_TOP} width={Math.max(0, bandRight - bandLeft)} height={AXIS_Y - BAND_TOP} fill="var(--color-paper-3)" stroke="currentColor" strokeWidth="1" />
        {preferred && (
          <rect
            x={preferred.min === undefined ? bandLeft : x(preferred.min)}
            y={BAND_TOP + 5}
            width={Math.max(0, (preferred.max === undefined ? bandRight : x(preferred.max)) - (preferred.min === undefined ? bandLeft : x(preferred.min)))}
            height={AXIS_Y - BAND_TOP - 10}
            fill={`url(#${id}-dots)`}
            stroke="currentColor"
            strokeWidth="0.6"
          />
        )}

        {/* Axis with the spec limits labelled below it. */}
        <line x1={LEFT} x2={RIGHT} y1={AXIS_Y} y2={AXIS_Y} stroke="currentColor" strokeWidth="1" />
        {band.min !== undefined && (
          <text x={clampText(x(band.min))} y={AXIS_Y + 14} fontSize="11" textAnchor="middle" fill="currentColor" className="figures">
            {label(band.min)}
          </text>
        )}
        {band.max !== undefined && (
          <text x={clampText(x(band.max))} y={crowded ? AXIS_Y + 27 : AXIS_Y + 14} fontSize="11" textAnchor="middle" fill="currentColor" className="figures">
            {label(band.max)}
          </text>
        )}

        {/* Decision limits: dashed ticks where the verdict changes. */}
        {dashed.map((p, i) => (
          <line key={i} x1={x(p)} x2={x(p)} y1={BAND_TOP - 8} y2={AXIS_Y + 4} stroke="currentColor" strokeWidth="1" strokeDasharray="2.5 2" />
        ))}

        {/* The measurement: its coverage interval as a capped bar, and a mark whose shape is the verdict. */}
        {measured && (
          <g className={verdictColour[measured.verdict]}>
            <line x1={x(measured.low)} x2={x(measured.high)} y1={MARK_Y} y2={MARK_Y} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.low)} x2={x(measured.low)} y1={MARK_Y - 4} y2={MARK_Y + 4} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.high)} x2={x(measured.high)} y1={MARK_Y - 4} y2={MARK_Y + 4} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.value)} x2={x(measured.value)} y1={MARK_Y + 6} y2={AXIS_Y} stroke="currentColor" strokeWidth="0.8" />
            <VerdictShape verdict={measured.verdict} cx={x(measured.value)} cy={MARK_Y} />
            <text x={clampText(x(measured.value))} y={14} fontSize="12" textAnchor="middle" fill="currentColor" fontWeight="600" className="figures">
              {label(measured.value)}
            </text>
          </g>
        )}
      </svg>
      <figcaption className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-muted">
        <span>{symbol === '' ? 'Scale: ratio, no unit' : `Scale in ${symbol}`}</span>
        <span>Grey: spec band</span>
        {preferred && <span>Dotted: preferred band</span>}
        {rejectSide && <span>Hatched: past the reject limit</span>}
        {measured &&
          (measured.asymmetric ? (
            <span>Bar: the coverage interval (asymmetric: longer on one side)</span>
          ) : (
            <span>Bar: value ± U (k = {kText(measured.coverageFactor)})</span>
          ))}
        {measured && dashed.length > 0 && (
          <span>
            Dashed: {measured.rule === 'simple' ? 'limits (simple rule)' : measured.asymmetric ? 'limits moved by each side of the interval (guarded rule)' : 'limits moved by U (guarded rule)'}
          </span>
        )}
      </figcaption>
    </figure>
  );
}

/**
 * Filled circle = within spec, open cross = out of spec, half-filled diamond = too close to call;
 * the same shapes as the VerdictBadge, drawn larger at the value.
 */
function VerdictShape({ verdict, cx, cy }: { verdict: Verdict; cx: number; cy: number }) {
  const scale = 0.85; // the badge's 16-unit glyphs, about 14 units across here
  return (
    <g transform={`translate(${cx - 8 * scale} ${cy - 8 * scale}) scale(${scale})`}>
      <VerdictGlyph verdict={verdict} onPaper />
    </g>
  );
}
