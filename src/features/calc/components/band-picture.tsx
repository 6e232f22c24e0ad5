import { useId } from 'react';
import { formatNumber, formatUncertainty } from '@shared/measure/format';
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
 * measured value with its ± U bar, verdict shape and guarded limits. Without a value (a spec
 * shown on its own) only the spec is drawn.
 */
export type BandPictureProps = SpecOnlyProps & (MeasuredProps | { [K in keyof MeasuredProps]?: undefined });

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

/**
 * The band picture: a horizontal scale with the spec band, the preferred band inside it, the
 * reject limit, the measured value as a mark (shape by verdict) with its ± U bar, and the
 * guarded limits as dashed ticks. Shapes, hatching and words carry the meaning, so it reads in
 * print and without colour.
 */
export function BandPicture(props: BandPictureProps) {
  const { unit, decimals, band, preferred, rejectPm } = props;
  const measured = props.valuePm === undefined ? null : props;
  const id = useId().replace(/:/g, '');
  const U = measured ? (measured.expandedPm < 0n ? -measured.expandedPm : measured.expandedPm) : 0n;

  // Scale: everything that must be visible, plus a margin; open sides get room for the bar.
  const points: bigint[] = measured ? [measured.valuePm - U, measured.valuePm + U] : [];
  for (const p of [band.minPm, band.maxPm, preferred?.minPm, preferred?.maxPm, rejectPm, measured?.limits.rejectBelowPm, measured?.limits.rejectAbovePm]) {
    if (p !== undefined && p !== null) points.push(p);
  }
  if (points.length === 0) points.push(0n);
  const lo = Number(points.reduce((a, b) => (a < b ? a : b)));
  const hi = Number(points.reduce((a, b) => (a > b ? a : b)));
  // A spec alone with a single limit has no width of its own: give it half its size either side.
  const alone = !measured && hi === lo ? Math.abs(hi) * 0.5 : 0;
  const span = Math.max(hi - lo, Number(U) * 4, alone, 1);
  const pad = span * 0.14;
  const from = lo - pad - (band.minPm === undefined ? span * 0.2 : 0);
  const to = hi + pad + (band.maxPm === undefined ? span * 0.2 : 0);
  const x = (pm: bigint | number) => LEFT + ((Number(pm) - from) / (to - from)) * (RIGHT - LEFT);
  const clampText = (px: number) => Math.min(RIGHT - 4, Math.max(LEFT + 4, px));
  const label = (pm: bigint) => formatNumber(pm, unit, decimals);

  const bandLeft = band.minPm === undefined ? LEFT : x(band.minPm);
  const bandRight = band.maxPm === undefined ? RIGHT : x(band.maxPm);
  // Limit labels closer than about six characters would overprint: drop the max label a row.
  const crowded = band.minPm !== undefined && band.maxPm !== undefined && x(band.maxPm) - x(band.minPm) < 44;
  const specText = `spec ${band.minPm !== undefined ? `from ${label(band.minPm)} ` : ''}${band.maxPm !== undefined ? `to ${label(band.maxPm)} ` : ''}${unitSymbols[unit]}`;
  const rejectSide = rejectPm === undefined || rejectPm === null ? null : band.maxPm !== undefined && rejectPm >= band.maxPm ? 'upper' : 'lower';
  const summary = measured
    ? `Measured ${label(measured.valuePm)} ${unitSymbols[unit]} ± ${formatUncertainty(Number(U) / 1e6, unit)} (k = ${measured.coverageFactor}); ` +
      `${specText}; ${verdictWords[measured.verdict]} by the ${measured.rule} rule.`
    : `Spec alone, no measured value: ${specText.slice(5)}` +
      `${preferred ? `; preferred band ${preferred.minPm !== undefined ? `from ${label(preferred.minPm)} ` : ''}${preferred.maxPm !== undefined ? `to ${label(preferred.maxPm)}` : ''}`.trimEnd() : ''}` +
      `${rejectSide && rejectPm !== null && rejectPm !== undefined ? `; reject ${rejectSide === 'upper' ? 'at or above' : 'at or below'} ${label(rejectPm)}` : ''}.`;

  // The reject label reads outward from its line unless that would run it off the picture
  // (about 5.6 units a character at font size 10); then it turns back over the band.
  const rejectLabelOutward = (() => {
    if (rejectPm === undefined || rejectPm === null) return true;
    const width = `reject ${label(rejectPm)}`.length * 5.6;
    return rejectSide === 'upper' ? x(rejectPm) + 3 + width <= W - 2 : x(rejectPm) - 3 - width >= 2;
  })();
  const dashed = measured
    ? [
        measured.limits.acceptMinPm,
        measured.limits.acceptMaxPm,
        ...(measured.rule === 'guarded' ? [measured.limits.rejectBelowPm, measured.limits.rejectAbovePm] : []),
      ].filter((p): p is bigint => p !== undefined)
    : [];
  // Without a value the rows above the band (value label, mark) are empty: leave them out.
  const top = measured ? 0 : BAND_TOP - 12;

  return (
    <figure className="w-full" data-band-picture="">
      <svg
        viewBox={`0 ${top} ${W} ${H - top}`}
        className="block h-auto w-full text-ink"
        role="img"
        aria-labelledby={`${id}-title ${id}-desc`}
      >
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
        {rejectSide && rejectPm !== null && rejectPm !== undefined && (
          <g>
            <rect
              x={rejectSide === 'upper' ? x(rejectPm) : LEFT}
              y={BAND_TOP}
              width={rejectSide === 'upper' ? RIGHT - x(rejectPm) : x(rejectPm) - LEFT}
              height={AXIS_Y - BAND_TOP}
              fill={`url(#${id}-hatch)`}
              opacity="0.45"
            />
            <line x1={x(rejectPm)} x2={x(rejectPm)} y1={BAND_TOP - 6} y2={AXIS_Y + 4} stroke="currentColor" strokeWidth="2" />
            <text
              x={clampText(x(rejectPm) + (rejectLabelOutward ? (rejectSide === 'upper' ? 3 : -3) : rejectSide === 'upper' ? -3 : 3))}
              y={H - 4}
              fontSize="10"
              textAnchor={(rejectSide === 'upper') === rejectLabelOutward ? 'start' : 'end'}
              fill="currentColor"
            >
              reject {label(rejectPm)}
            </text>
          </g>
        )}

        {/* Spec band and preferred band. */}
        <rect x={bandLeft} y={BAND_TOP} width={Math.max(0, bandRight - bandLeft)} height={AXIS_Y - BAND_TOP} fill="var(--color-paper-3)" stroke="currentColor" strokeWidth="1" />
        {preferred && (
          <rect
            x={preferred.minPm === undefined ? bandLeft : x(preferred.minPm)}
            y={BAND_TOP + 5}
            width={Math.max(0, (preferred.maxPm === undefined ? bandRight : x(preferred.maxPm)) - (preferred.minPm === undefined ? bandLeft : x(preferred.minPm)))}
            height={AXIS_Y - BAND_TOP - 10}
            fill={`url(#${id}-dots)`}
            stroke="currentColor"
            strokeWidth="0.6"
          />
        )}

        {/* Axis with the spec limits labelled below it. */}
        <line x1={LEFT} x2={RIGHT} y1={AXIS_Y} y2={AXIS_Y} stroke="currentColor" strokeWidth="1" />
        {band.minPm !== undefined && (
          <text x={clampText(x(band.minPm))} y={AXIS_Y + 14} fontSize="11" textAnchor="middle" fill="currentColor" className="figures">
            {label(band.minPm)}
          </text>
        )}
        {band.maxPm !== undefined && (
          <text x={clampText(x(band.maxPm))} y={crowded ? AXIS_Y + 27 : AXIS_Y + 14} fontSize="11" textAnchor="middle" fill="currentColor" className="figures">
            {label(band.maxPm)}
          </text>
        )}

        {/* Guarded limits: dashed ticks where the verdict changes. */}
        {dashed.map((p, i) => (
          <line key={i} x1={x(p)} x2={x(p)} y1={BAND_TOP - 8} y2={AXIS_Y + 4} stroke="currentColor" strokeWidth="1" strokeDasharray="2.5 2" />
        ))}

        {/* The measurement: value ± U as a capped bar, and a mark whose shape is the verdict. */}
        {measured && (
          <g className={verdictColour[measured.verdict]}>
            <line x1={x(measured.valuePm - U)} x2={x(measured.valuePm + U)} y1={MARK_Y} y2={MARK_Y} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.valuePm - U)} x2={x(measured.valuePm - U)} y1={MARK_Y - 4} y2={MARK_Y + 4} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.valuePm + U)} x2={x(measured.valuePm + U)} y1={MARK_Y - 4} y2={MARK_Y + 4} stroke="currentColor" strokeWidth="1.6" />
            <line x1={x(measured.valuePm)} x2={x(measured.valuePm)} y1={MARK_Y + 6} y2={AXIS_Y} stroke="currentColor" strokeWidth="0.8" />
            <VerdictShape verdict={measured.verdict} cx={x(measured.valuePm)} cy={MARK_Y} />
            <text x={clampText(x(measured.valuePm))} y={14} fontSize="12" textAnchor="middle" fill="currentColor" fontWeight="600" className="figures">
              {label(measured.valuePm)}
            </text>
          </g>
        )}
      </svg>
      <figcaption className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-muted">
        <span>Scale in {unitSymbols[unit]}</span>
        <span>Grey: spec band</span>
        {preferred && <span>Dotted: preferred band</span>}
        {rejectSide && <span>Hatched: past the reject limit</span>}
        {measured && <span>Bar: value ± U (k = {measured.coverageFactor})</span>}
        {measured && dashed.length > 0 && (
          <span>Dashed: {measured.rule === 'guarded' ? 'limits moved by U (guarded rule)' : 'limits (simple rule)'}</span>
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
