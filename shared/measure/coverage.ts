/**
 * Coverage: how wide an interval around the estimate holds the measurand with a stated
 * probability, and how probable it is that the measurand lies within a spec band. Two routes:
 *
 * - the GUM uncertainty framework: a coverage factor from Student's t with the Welch–Satterthwaite
 *   effective degrees of freedom (JCGM 100:2008 6.3, G.3, G.4), and the probability of
 *   conformance from the same distribution (JCGM 106:2012 7.2, 7.3);
 * - propagation of distributions by an adaptive Monte Carlo method (JCGM 101:2008 clause 7), for
 *   when the output is far from a t (a dominant rectangular, a Type A with few observations).
 *
 * Plain JavaScript only (no Node APIs, no eval): the same code runs in a browser Web Worker.
 */
import normalCdf from '@stdlib/stats-base-dists-normal-cdf';
import normalQuantile from '@stdlib/stats-base-dists-normal-quantile';
import tCdf from '@stdlib/stats-base-dists-t-cdf';
import tQuantile from '@stdlib/stats-base-dists-t-quantile';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import type { JumpableRandomGenerator } from 'pure-rand/types/JumpableRandomGenerator';
import type { Component } from './components';

/**
 * Beyond this many degrees of freedom the normal stands in for t: they differ by about
 * k(k² + 1)/(4ν) ≈ 10⁻¹² at 95 %, and stdlib's t quantile stops working at ν ≈ 10²⁰ (it returns 0),
 * while its t CDF answers 0.5 for ν = ∞.
 */
const NORMAL_BEYOND_DOF = 1e12;

/**
 * The degrees of freedom the t-distribution is looked up with. GUM G.4.1 says of a non-integer
 * ν_eff "truncate to the next lower integer" (the conservative choice: fewer degrees of freedom,
 * wider interval); Infinity and very large ν mean the normal.
 */
function lookupDegreesOfFreedom(dof: number): number {
  if (Number.isNaN(dof) || dof <= 0) throw new RangeError(`degrees of freedom must be positive, got ${dof}`);
  if (dof > NORMAL_BEYOND_DOF) return Infinity;
  const nu = Math.floor(dof);
  if (nu < 1) throw new RangeError(`degrees of freedom ${dof} truncate to 0 (GUM G.4.1); at least 1 is needed`);
  return nu;
}

/** Standardised CDF: Student's t with ν degrees of freedom, or the normal when ν is Infinity. */
function standardCdf(z: number, nu: number): number {
  return nu === Infinity ? normalCdf(z, 0, 1) : tCdf(z, nu);
}

/**
 * Coverage factor k = t_{(1+p)/2}(ν) for coverage probability p (GUM 6.3.3, G.3.4, Table G.2):
 * the interval y ± k·u_c then has coverage probability p when (y − Y)/u_c follows t_ν (GUM G.6.2).
 * ν = Infinity gives the normal quantile (k = 1.960 for 95 %). A non-integer ν (a ν_eff from
 * `welchSatterthwaite`) is truncated to the next lower integer, as GUM G.4.1 instructs.
 */
export function coverageFactorFor(probability: number, dof: number): number {
  if (!(probability > 0 && probability < 1)) throw new RangeError(`coverage probability must be in (0, 1), got ${probability}`);
  const nu = lookupDegreesOfFreedom(dof);
  const q = (1 + probability) / 2;
  return nu === Infinity ? normalQuantile(q, 0, 1) : tQuantile(q, nu);
}

/**
 * The coverage probability a chosen k gives, p = 2·F_t(k; ν) − 1 (the inverse of
 * `coverageFactorFor`, with ν truncated the same way; GUM G.3.4): k = 2 with ν = ∞ gives
 * 95.45 % (GUM 6.3.3), with few degrees of freedom much less.
 */
export function impliedCoverageProbability(k: number, dof: number): number {
  if (Number.isNaN(k) || k < 0) throw new RangeError(`coverage factor must be non-negative, got ${k}`);
  const nu = lookupDegreesOfFreedom(dof);
  // 2F(k) − 1 = 1 − 2F(−k); the lower tail keeps its digits when p is close to 1.
  return 1 - 2 * standardCdf(-k, nu);
}

/** One uncertainty contribution to the Welch–Satterthwaite formula. */
export interface DegreesOfFreedomTerm {
  /** c_i·u(x_i), in the output's unit; the sign does not matter. */
  readonly contribution: number;
  /** ν_i, the degrees of freedom of u(x_i); Infinity for an exactly known Type B (GUM G.4.2). */
  readonly dof: number;
}

/**
 * Effective degrees of freedom of u_c(y), GUM G.4.1 eq. (G.2b):
 * ν_eff = u_c⁴ / Σ (c_i u_i)⁴/ν_i with u_c² = Σ (c_i u_i)². Infinity when every ν_i is infinite
 * or u_c = 0 (nothing uncertain is estimated). Uncorrelated inputs only, as the formula assumes.
 * The result is real; `coverageFactorFor` truncates it.
 */
export function welchSatterthwaite(terms: readonly DegreesOfFreedomTerm[]): number {
  // Contributions are scaled by the largest one so that fourth powers of tiny figures (1e-100 m)
  // do not underflow to 0 and huge ones do not overflow; ν_eff is scale-free.
  let largest = 0;
  for (const { contribution, dof } of terms) {
    if (!Number.isFinite(contribution)) throw new RangeError(`contribution must be finite, got ${contribution}`);
    if (Number.isNaN(dof) || dof <= 0) throw new RangeError(`degrees of freedom must be positive, got ${dof}`);
    largest = Math.max(largest, Math.abs(contribution));
  }
  if (largest === 0) return Infinity;
  let variance = 0;
  let denominator = 0;
  for (const { contribution, dof } of terms) {
    const r = contribution / largest;
    const r2 = r * r;
    variance += r2;
    if (dof !== Infinity) denominator += (r2 * r2) / dof;
  }
  return denominator === 0 ? Infinity : (variance * variance) / denominator;
}

/** A spec band: either limit may be absent (one-sided tolerance, JCGM 106:2012 7.2.1). */
export interface Band {
  readonly min?: number;
  readonly max?: number;
}

/**
 * Probability of conformance p_c = Pr(min ≤ Y ≤ max) when Y is a t-distribution with ν degrees
 * of freedom scaled by `scale` (u_c) and shifted to `mean` (y), the normal when ν = ∞
 * (JCGM 106:2012 7.2 eq. 10, 7.3; GUM G.6.2 for the t). ν is truncated as in `coverageFactorFor`,
 * so the band probability and the interval y ± k·u_c describe the same distribution. A scale of
 * 0 (no uncertainty) gives 1 or 0, the limits being inclusive.
 */
export function probabilityWithin(band: Band, mean: number, scale: number, dof: number): number {
  if (!Number.isFinite(mean)) throw new RangeError(`mean must be finite, got ${mean}`);
  if (!(scale >= 0) || scale === Infinity) throw new RangeError(`scale must be finite and non-negative, got ${scale}`);
  const lo = band.min ?? -Infinity;
  const hi = band.max ?? Infinity;
  if (Number.isNaN(lo) || Number.isNaN(hi)) throw new RangeError('band limits must be numbers');
  if (lo > hi) return 0;
  if (scale === 0) return lo <= mean && mean <= hi ? 1 : 0;
  const nu = lookupDegreesOfFreedom(dof);
  const a = (lo - mean) / scale;
  const b = (hi - mean) / scale;
  // F(b) − F(a) with both far in the upper tail is a difference of two numbers close to 1; the
  // distribution is symmetric, so take it from the lower tail instead, F(−a) − F(−b).
  return a > 0 ? standardCdf(-a, nu) - standardCdf(-b, nu) : standardCdf(b, nu) - standardCdf(a, nu);
}

/**
 * Numerical tolerance of a value, JCGM 101:2008 7.9.2: write u = c × 10^l with c an integer of
 * `significantDigits` digits (the digits u is reported with), then δ = ½ × 10^l. u = 0 gives 0.
 */
export function numericalTolerance(u: number, significantDigits = 2): number {
  if (!(u >= 0) || u === Infinity) throw new RangeError(`u must be finite and non-negative, got ${u}`);
  if (!Number.isInteger(significantDigits) || significantDigits < 1) {
    throw new RangeError(`significantDigits must be a positive integer, got ${significantDigits}`);
  }
  if (u === 0) return 0;
  let l = Math.floor(Math.log10(u)) - significantDigits + 1;
  // log10 is not exact near powers of ten, and rounding u to c may carry into one more digit
  // (0.0999 with two digits is 0.10, c = 10, l = −2): settle l on the rounded c.
  const lowest = 10 ** (significantDigits - 1);
  const highest = 10 ** significantDigits;
  for (;;) {
    const c = Math.round(u / 10 ** l);
    if (c >= highest) l += 1;
    else if (c < lowest) l -= 1;
    else break;
  }
  // ½ × 10^l, dividing for negative l: 10^−l is exact, 10^l is not (0.5 × 10⁻⁵ ≠ 0.000005).
  return l < 0 ? 0.5 / 10 ** -l : 0.5 * 10 ** l;
}

/**
 * One input of the Monte Carlo model: a component's distribution (the fields of `Component`) and
 * the model inputs it moves, by index into `estimates`.
 */
export interface MonteCarloComponent extends Pick<Component, 'distribution' | 'standardUncertainty' | 'halfWidth' | 'degreesOfFreedom'> {
  /** Each draw δ of the component adds `effect · δ` to input `index`. */
  readonly effects: readonly { readonly index: number; readonly effect: number }[];
}

/** What `monteCarlo` propagates. */
export interface MonteCarloInput {
  /** Best estimate of each model input (index i). */
  readonly estimates: readonly number[];
  /** The uncertainty components, each drawn once per trial. */
  readonly components: readonly MonteCarloComponent[];
  /** Evaluates the measurand from input values (JCGM 101 7.4). Do not keep `x`: it is reused. */
  readonly model: (x: Float64Array) => number;
  /** Coverage probability p. */
  readonly probability: number;
  /** Seeds the generator (as a 32-bit integer, `seed | 0`): same input and seed, same result. */
  readonly seed: number;
  /** Numerical tolerance δ (JCGM 101 7.9.2), in the output's unit; see `numericalTolerance`. */
  readonly tolerance: number;
  /** Most trials to run; default 1 000 000. Rounded down to whole batches. */
  readonly maxTrials?: number;
  /** Trials per batch; default max(⌈100/(1 − p)⌉, 10 000) (JCGM 101 7.9.4 a). */
  readonly batchSize?: number;
  /** If given, the fraction of trials inside it (inclusive) is returned too. */
  readonly band?: Band;
}

/** What `monteCarlo` found, from all trials (JCGM 101 7.9.4 k). */
export interface MonteCarloResult {
  /** Number of trials M. */
  readonly trials: number;
  /** Estimate y: the average of the model values (JCGM 101 7.6 eq. 16). */
  readonly mean: number;
  /** Standard uncertainty u(y): their standard deviation (JCGM 101 7.6 eq. 17). */
  readonly standardDeviation: number;
  /** Lower end of the probabilistically symmetric coverage interval (JCGM 101 7.7.2). */
  readonly low: number;
  /** Upper end of it. */
  readonly high: number;
  /** Whether the adaptive procedure stabilised within δ before maxTrials (JCGM 101 7.9.4 j). */
  readonly converged: boolean;
  /** Fraction of trials within the band, null when no band was given. */
  readonly probabilityWithin: number | null;
}

/** (π/4)/2²⁹: turns a 29-bit integer into an angle in [0, π/4). */
const OCTANT_STEP = Math.PI / 4 / 536870912;
/** 2⁻⁵³: one unit in the last place of a double in [0.5, 1). */
const EPSILON_53 = 1 / 9007199254740992;
/** 2²⁶: shifts the 27 high bits of one output above the 26 of the next. */
const TWO_26 = 67108864;

/** Trials whose draws are made together, component by component. */
const CHUNK = 4096;

/** Fewest batches before the adaptive procedure may stop (our choice; JCGM 101 7.9.4 allows 2). */
export const MIN_BATCHES = 5;

/** How many standard normals Box–Muller makes at a time for the gamma sampler (even: pairs). */
const NORMAL_POOL = 4096;

/**
 * The draws of one run: uniforms from xoroshiro128+ (pure-rand, whose `next()` advances in place),
 * normals by Box–Muller (JCGM 101 C.4) and gammas by Marsaglia–Tsang. One instance per run;
 * nothing is allocated per draw. Draws are made a column (one component, many trials) at a time
 * in tight loops; the gamma sampler takes its normals from a pool filled the same way. The
 * sequence depends only on the seed and the order of the calls.
 */
class Draws {
  private readonly pool = new Float64Array(NORMAL_POOL);
  /** cos φ and sin φ of the pair being made (see `fillNormal`). */
  private readonly pick = new Float64Array(2);
  private poolIndex = NORMAL_POOL;

  constructor(private readonly rng: JumpableRandomGenerator) {}

  /**
   * Uniform in the open interval (0, 1) with 53 random bits (JCGM 101 annex C): the high bits of two
   * outputs (the low bits of an xoroshiro128+ output are its weakest), plus half a unit so that
   * neither 0 (log 0 in Box–Muller) nor 1 can come out.
   */
  uniform(): number {
    const high = this.rng.next() >>> 5;
    const low = this.rng.next() >>> 6;
    return (high * TWO_26 + low + 0.5) * EPSILON_53;
  }

  /** A standard normal, from the pool. */
  normal(): number {
    if (this.poolIndex === NORMAL_POOL) this.refill();
    return this.pool[this.poolIndex++] as number;
  }

  /**
   * Box–Muller, JCGM 101 C.4: from uniforms U₁, U₂, Z₁ = √(−2 ln U₁) cos 2πU₂ and
   * Z₂ = √(−2 ln U₁) sin 2πU₂ are independent standard normals. Fills `out[from..from+n)` with
   * σ·Z; an odd n leaves the last pair's second value unused.
   */
  fillNormal(out: Float64Array, from: number, n: number, sigma: number): void {
    const pick = this.pick;
    const end = from + n;
    for (let i = from; i < end; i += 2) {
      const r = sigma * Math.sqrt(-2 * Math.log(this.uniform()));
      // The angle 2πU₂ from one 32-bit output, 32 bits being plenty for an angle (U₁ keeps 53: it
      // sets how far the tails reach). A uniform angle is a uniform φ in [0, π/4) (29 bits) carried
      // by one of the 8 symmetries of the square (3 bits): swap cos and sin, flip either sign.
      // cos and sin on [0, π/4) need no argument reduction, which makes them about twice as fast
      // as on [0, 2π). The bit picks are arithmetic (r − 2r·bit is ±r exactly, a table read for
      // the swap), not branches, which random bits would mispredict.
      const w = this.rng.next();
      const phi = OCTANT_STEP * ((w >>> 3) + 0.5);
      pick[0] = Math.cos(phi);
      pick[1] = Math.sin(phi);
      const swap = w & 1;
      out[i] = (r - 2 * r * ((w >>> 1) & 1)) * (pick[swap] as number);
      if (i + 1 < end) out[i + 1] = (r - 2 * r * ((w >>> 2) & 1)) * (pick[1 - swap] as number);
    }
  }

  private refill(): void {
    this.fillNormal(this.pool, 0, NORMAL_POOL, 1);
    this.poolIndex = 0;
  }

  /** Fills `out[from..from+n)` with draws from the rectangular distribution on [−a, a]. */
  fillRectangular(out: Float64Array, from: number, n: number, a: number): void {
    const end = from + n;
    for (let i = from; i < end; i++) out[i] = a * (2 * this.uniform() - 1);
  }

  /**
   * Fills `out[from..from+n)` with u·t_ν, the JCGM 101 6.4.9 t-distribution of a Type A mean whose
   * standard uncertainty is u = s/√n (so its variance is u²ν/(ν − 2), 6.4.9.4): t_ν = Z/√(χ²_ν/ν)
   * with χ²_ν = 2·Gamma(ν/2). `d`, `c`, `boost` are the Marsaglia–Tsang constants of shape ν/2
   * (see `gamma`). ν is used as given, not truncated: it describes the input, not a table lookup.
   */
  fillStudentT(out: Float64Array, from: number, n: number, u: number, nu: number, d: number, c: number, boost: number): void {
    this.fillNormal(out, from, n, u);
    const end = from + n;
    for (let i = from; i < end; i++) out[i] = (out[i] as number) / Math.sqrt((2 * this.gamma(d, c, boost)) / nu);
  }

  /**
   * Gamma(shape, 1) by Marsaglia and Tsang (ACM TOMS 26, 2000), with d = shape − 1/3 and
   * c = 1/√(9d) precomputed for shape ≥ 1; a shape below 1 draws Gamma(shape + 1) and multiplies by
   * U^{1/shape} (`boost` = 1/shape; 0 means no boost).
   */
  gamma(d: number, c: number, boost: number): number {
    let value: number;
    for (;;) {
      let x: number;
      let v: number;
      do {
        x = this.normal();
        v = 1 + c * x;
      } while (v <= 0);
      v = v * v * v;
      const u = this.uniform();
      const x2 = x * x;
      if (u < 1 - 0.0331 * x2 * x2 || Math.log(u) < 0.5 * x2 + d * (1 - v + Math.log(v))) {
        value = d * v;
        break;
      }
    }
    return boost === 0 ? value : value * Math.pow(this.uniform(), boost);
  }
}

/**
 * Indices (0-based) of y_low and y_high among M sorted values: the probabilistically symmetric
 * coverage interval of JCGM 101 7.7.2 is [y_(r), y_(r+q)] (1-based) with q = pM rounded to the
 * nearest integer and r = (M − q)/2, or the integer part of (M − q + 1)/2 when that is not whole.
 * A sample too small for p clamps to its extremes.
 */
function intervalIndices(m: number, probability: number, out: Int32Array): void {
  const pm = probability * m;
  const q = Number.isInteger(pm) ? pm : Math.floor(pm + 0.5);
  const half = (m - q) / 2;
  const r = Math.max(1, Number.isInteger(half) ? half : Math.floor((m - q + 1) / 2));
  out[0] = r - 1;
  out[1] = Math.min(m, r + q) - 1;
}

/**
 * Rearranges `a[from..to]` so that a[k] holds the value it would hold if sorted, smaller ones
 * before it and larger ones after (Hoare's selection, median-of-three pivot). A batch only needs
 * two order statistics, which this finds in linear time where a sort takes M log M.
 */
function select(a: Float64Array, k: number, from: number, to: number): void {
  let lo = from;
  let hi = to;
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    // Median of three to a[mid], then Hoare partition around it.
    if ((a[mid] as number) < (a[lo] as number)) swap(a, mid, lo);
    if ((a[hi] as number) < (a[lo] as number)) swap(a, hi, lo);
    if ((a[hi] as number) < (a[mid] as number)) swap(a, hi, mid);
    const pivot = a[mid] as number;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while ((a[i] as number) < pivot) i++;
      while ((a[j] as number) > pivot) j--;
      if (i <= j) {
        swap(a, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

function swap(a: Float64Array, i: number, j: number): void {
  const t = a[i] as number;
  a[i] = a[j] as number;
  a[j] = t;
}

/** Index of the first sorted value ≥ x (or > x when `strict`). */
function lowerBound(sorted: Float64Array, x: number, strict: boolean): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    const v = sorted[mid] as number;
    if (v < x || (strict && v === x)) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Standard deviation of the mean of the first h values: s/√h (JCGM 101 7.9.4 f). */
function standardDeviationOfMean(values: Float64Array, h: number): number {
  let sum = 0;
  for (let i = 0; i < h; i++) sum += values[i] as number;
  const mean = sum / h;
  let squares = 0;
  for (let i = 0; i < h; i++) {
    const d = (values[i] as number) - mean;
    squares += d * d;
  }
  return Math.sqrt(squares / (h - 1) / h);
}

/**
 * Propagates the components' distributions through `model` by the adaptive Monte Carlo procedure
 * of JCGM 101:2008 7.9.4. Each trial draws every component once (mean 0: normal with σ = u;
 * rectangular on ±a, a = halfWidth or u√3; student-t as u·t_ν, the JCGM 101 6.4.9 distribution of
 * a Type A mean whose u is s/√n, variance u²ν/(ν − 2)) and sets x_i = estimate_i + Σ effect·δ; a
 * component that enters several inputs moves them together (correlation 1, GUM F.1.2.3).
 * Batches of M trials run until, for each of y_low and y_high (and y and u(y), unless a
 * student-t with ν ≤ 4 makes those moments unstable), the h batch values have 2s/√h ≤ δ;
 * `converged` is false if maxTrials came first. Results are from all h·M trials, the interval
 * from their sorted values.
 */
export function monteCarlo(input: MonteCarloInput): MonteCarloResult {
  const { estimates, components, model, probability, seed, tolerance, band } = input;
  if (!(probability > 0 && probability < 1)) throw new RangeError(`coverage probability must be in (0, 1), got ${probability}`);
  if (!(tolerance >= 0)) throw new RangeError(`tolerance must be non-negative, got ${tolerance}`);
  if (!Number.isFinite(seed)) throw new RangeError(`seed must be finite, got ${seed}`);
  const maxTrials = input.maxTrials ?? 1_000_000;
  if (!Number.isInteger(maxTrials) || maxTrials < 1) throw new RangeError(`maxTrials must be a positive integer, got ${maxTrials}`);
  const requestedBatch = input.batchSize ?? Math.max(Math.ceil(100 / (1 - probability)), 10_000);
  if (!Number.isInteger(requestedBatch) || requestedBatch < 1) throw new RangeError(`batchSize must be a positive integer, got ${requestedBatch}`);
  const batchSize = Math.min(requestedBatch, maxTrials);
  const maxBatches = Math.floor(maxTrials / batchSize);

  const inputCount = estimates.length;
  const base = Float64Array.from(estimates);
  for (const e of base) if (!Number.isFinite(e)) throw new RangeError(`estimates must be finite, got ${e}`);

  // Components grouped by shape so that the draws need no per-component branching. A component
  // with u = 0 or no effect moves nothing and is left out; a student-t with ν = ∞ is a normal.
  // Each kept component gets a slot: its column of draws.
  const normalSlots: number[] = [];
  const normalScale: number[] = [];
  const rectangularSlots: number[] = [];
  const rectangularHalfWidth: number[] = [];
  const tSlots: number[] = [];
  const tScale: number[] = [];
  const tNu: number[] = [];
  let unstableMoments = false;
  // Per-input (slot, effect) lists, flattened below into effectStart/effectColumn/effectValue.
  const perInput: { slot: number; effect: number }[][] = Array.from({ length: inputCount }, () => []);
  let slotCount = 0;
  components.forEach((component, c) => {
    const u = component.standardUncertainty;
    if (!(u >= 0) || u === Infinity) throw new RangeError(`component ${c}: standard uncertainty must be finite and non-negative, got ${u}`);
    for (const { index, effect } of component.effects) {
      if (!Number.isInteger(index) || index < 0 || index >= inputCount) throw new RangeError(`component ${c}: effect index ${index} is not an input`);
      if (!Number.isFinite(effect)) throw new RangeError(`component ${c}: effect must be finite, got ${effect}`);
    }
    const moves = component.effects.some(({ effect }) => effect !== 0);
    if (component.distribution === 'rectangular') {
      const a = component.halfWidth ?? u * Math.sqrt(3);
      if (!(a >= 0) || a === Infinity) throw new RangeError(`component ${c}: half-width must be finite and non-negative, got ${a}`);
      if (a === 0 || !moves) return;
      rectangularSlots.push(slotCount);
      rectangularHalfWidth.push(a);
    } else if (component.distribution === 'student-t' && component.degreesOfFreedom !== Infinity) {
      const nu = component.degreesOfFreedom;
      if (!(nu > 0)) throw new RangeError(`component ${c}: degrees of freedom must be positive, got ${nu}`);
      if (u === 0 || !moves) return;
      tSlots.push(slotCount);
      tScale.push(u);
      tNu.push(nu);
      if (nu <= 4) unstableMoments = true;
    } else if (component.distribution === 'normal' || component.distribution === 'student-t') {
      if (u === 0 || !moves) return;
      normalSlots.push(slotCount);
      normalScale.push(u);
    } else {
      throw new RangeError(`component ${c}: unknown distribution ${String(component.distribution)}`);
    }
    for (const { index, effect } of component.effects) if (effect !== 0) perInput[index]?.push({ slot: slotCount, effect });
    slotCount += 1;
  });
  const nNormal = normalSlots.length;
  const nRect = rectangularSlots.length;
  const nT = tSlots.length;
  const normalSlot = Int32Array.from(normalSlots);
  const normalSigma = Float64Array.from(normalScale);
  const rectSlot = Int32Array.from(rectangularSlots);
  const rectA = Float64Array.from(rectangularHalfWidth);
  const tSlot = Int32Array.from(tSlots);
  const tU = Float64Array.from(tScale);
  const tDof = Float64Array.from(tNu);
  // χ²_ν = 2·Gamma(ν/2): Marsaglia–Tsang constants for shape ν/2, boosted when ν/2 < 1.
  const tD = new Float64Array(nT);
  const tC = new Float64Array(nT);
  const tBoost = new Float64Array(nT);
  for (let j = 0; j < nT; j++) {
    const shape = (tDof[j] as number) / 2;
    const core = shape < 1 ? shape + 1 : shape;
    tD[j] = core - 1 / 3;
    tC[j] = 1 / Math.sqrt(9 * (core - 1 / 3));
    tBoost[j] = shape < 1 ? 1 / shape : 0;
  }
  const effectStart = new Int32Array(inputCount + 1);
  let effectCount = 0;
  for (let i = 0; i < inputCount; i++) {
    effectStart[i] = effectCount;
    effectCount += (perInput[i] as unknown[]).length;
  }
  effectStart[inputCount] = effectCount;
  // Where each effect's draws start in the chunk's columns, and by how much it moves its input.
  const stride = Math.min(CHUNK, batchSize);
  const effectColumn = new Int32Array(effectCount);
  const effectValue = new Float64Array(effectCount);
  for (let i = 0, k = 0; i < inputCount; i++) {
    for (const { slot, effect } of perInput[i] as { slot: number; effect: number }[]) {
      effectColumn[k] = slot * stride;
      effectValue[k] = effect;
      k += 1;
    }
  }

  const rng = xoroshiro128plus(seed | 0);
  // pure-rand seeds the state straight from the integer; nearby seeds start from nearby states,
  // so run the generator a little before use.
  for (let i = 0; i < 64; i++) rng.next();
  const draws = new Draws(rng);

  const columns = new Float64Array(slotCount * stride);
  const x = new Float64Array(inputCount);
  let values = new Float64Array(Math.min(maxBatches, 8) * batchSize);
  const batchMean = new Float64Array(maxBatches);
  const batchSd = new Float64Array(maxBatches);
  const batchLow = new Float64Array(maxBatches);
  const batchHigh = new Float64Array(maxBatches);
  const interval = new Int32Array(2);

  let h = 0;
  let converged = false;
  while (h < maxBatches) {
    const offset = h * batchSize;
    if (offset + batchSize > values.length) {
      const grown = new Float64Array(Math.min(maxBatches, 2 * (values.length / batchSize)) * batchSize);
      grown.set(values);
      values = grown;
    }
    // A chunk at a time: each component's draws first, one tight loop per component into its
    // column (slot·stride …), then one model evaluation per trial. Chunks keep the columns small
    // (in cache, and bounded however large a batch p calls for).
    for (let done = 0; done < batchSize; done += stride) {
      const n = Math.min(stride, batchSize - done);
      for (let j = 0; j < nNormal; j++) draws.fillNormal(columns, (normalSlot[j] as number) * stride, n, normalSigma[j] as number);
      for (let j = 0; j < nRect; j++) draws.fillRectangular(columns, (rectSlot[j] as number) * stride, n, rectA[j] as number);
      for (let j = 0; j < nT; j++) {
        draws.fillStudentT(columns, (tSlot[j] as number) * stride, n, tU[j] as number, tDof[j] as number, tD[j] as number, tC[j] as number, tBoost[j] as number);
      }
      const first = offset + done;
      for (let t = 0; t < n; t++) {
        for (let i = 0; i < inputCount; i++) {
          let xi = base[i] as number;
          const end = effectStart[i + 1] as number;
          for (let k = effectStart[i] as number; k < end; k++) xi += (effectValue[k] as number) * (columns[(effectColumn[k] as number) + t] as number);
          x[i] = xi;
        }
        const y = model(x);
        if (!Number.isFinite(y)) throw new RangeError(`the model returned ${y} at trial ${first + t}`);
        values[first + t] = y;
      }
    }

    // JCGM 101 7.9.4 d: this batch's y, u(y), y_low and y_high.
    const batch = values.subarray(offset, offset + batchSize);
    let sum = 0;
    for (let t = 0; t < batchSize; t++) sum += batch[t] as number;
    const mean = sum / batchSize;
    let squares = 0;
    for (let t = 0; t < batchSize; t++) {
      const d = (batch[t] as number) - mean;
      squares += d * d;
    }
    batchMean[h] = mean;
    batchSd[h] = batchSize > 1 ? Math.sqrt(squares / (batchSize - 1)) : 0;
    intervalIndices(batchSize, probability, interval);
    const lowAt = interval[0] as number;
    const highAt = interval[1] as number;
    select(batch, lowAt, 0, batchSize - 1);
    select(batch, highAt, lowAt, batchSize - 1);
    batchLow[h] = batch[lowAt] as number;
    batchHigh[h] = batch[highAt] as number;
    h += 1;

    // 7.9.4 e–j: stop when 2·s/√h ≤ δ for each result. The standard allows h = 2; we wait for
    // MIN_BATCHES, because two batches can agree by chance and s from two values says little.
    if (h >= Math.min(MIN_BATCHES, maxBatches)) {
      const limit = tolerance / 2;
      if (
        standardDeviationOfMean(batchLow, h) <= limit &&
        standardDeviationOfMean(batchHigh, h) <= limit &&
        (unstableMoments || (standardDeviationOfMean(batchMean, h) <= limit && standardDeviationOfMean(batchSd, h) <= limit))
      ) {
        converged = true;
        break;
      }
    }
  }

  // 7.9.4 k: results from all h·M values (JCGM 101 7.6, 7.7).
  const trials = h * batchSize;
  const all = values.subarray(0, trials);
  let sum = 0;
  for (let t = 0; t < trials; t++) sum += all[t] as number;
  const mean = sum / trials;
  let squares = 0;
  for (let t = 0; t < trials; t++) {
    const d = (all[t] as number) - mean;
    squares += d * d;
  }
  const standardDeviation = trials > 1 ? Math.sqrt(squares / (trials - 1)) : 0;
  all.sort();
  intervalIndices(trials, probability, interval);

  let within: number | null = null;
  if (band) {
    const lo = band.min ?? -Infinity;
    const hi = band.max ?? Infinity;
    within = lo > hi ? 0 : (lowerBound(all, hi, true) - lowerBound(all, lo, false)) / trials;
  }
  return {
    trials,
    mean,
    standardDeviation,
    low: all[interval[0] as number] as number,
    high: all[interval[1] as number] as number,
    converged,
    probabilityWithin: within,
  };
}
