/**
 * Uncertainty components: the input quantities of a measurement model, each with its
 * distribution, standard uncertainty and degrees of freedom (JCGM 100:2008 4.1–4.3; JCGM 101:2008
 * 6.4). Every reading is its estimate plus a list of components; a component may enter several
 * readings (one instrument's calibration error enters every reading taken with it, with
 * correlation 1: GUM 5.2.2 and F.1.2.3), which is how a difference cancels it and a sum adds it.
 *
 * Components are additive on the readings they enter: a draw δ of the component moves each of
 * those readings by `effect · δ`. `standardUncertainty` and `halfWidth` are in the component's
 * own unit (`unit`), and `effect` turns that into the reading's base unit (SI-coherent base units
 * of `quantities.ts`), so a temperature component in kelvin can enter a length in metres through
 * ∂L/∂t.
 */

/** The shapes a component's distribution can take (JCGM 101:2008 6.4). */
export const distributions = ['normal', 'rectangular', 'student-t'] as const;

/** A distribution shape: normal (Gaussian), rectangular (uniform) or a scaled and shifted t. */
export type Distribution = (typeof distributions)[number];

/** How a component enters one reading. */
export interface ComponentEffect {
  /** The reading key. */
  readonly reading: string;
  /** Reading base units per component unit (1 when the component is in the reading's own unit). */
  readonly effect: number;
}

/** One input quantity's uncertainty, as it enters the readings. */
export interface Component {
  /** Unique within a calculation: `<reading>:resolution`, `instrument:<name>:calibration`… */
  readonly id: string;
  /** Words for the budget: "resolution of 0.0001 in", "calibration of mic-1 (U = 1 µm, k = 2)". */
  readonly source: string;
  readonly distribution: Distribution;
  /** Standard uncertainty, in `unit`. */
  readonly standardUncertainty: number;
  /** Half-width a of a rectangular distribution, in `unit` (u = a/√3); absent otherwise. */
  readonly halfWidth?: number;
  /** What the stated figure was divided by to get u (√3, k, 1…), for the budget; null for Type A. */
  readonly divisor: number | null;
  /** Degrees of freedom ν: n − 1 for Type A, Infinity for Type B unless stated. */
  readonly degreesOfFreedom: number;
  /** The unit the component's figures are in (a unit code of `quantities.ts`, or a plain label like "K"). */
  readonly unit: string;
  /** Instrument name when the component belongs to an instrument and is shared by its readings. */
  readonly instrument?: string;
  /** The readings it enters and by how much. */
  readonly effects: readonly ComponentEffect[];
}
