/**
 * The instrument at the part's temperature (`instrumentTemperature: "same-as-part"`), modelled as
 * GUM (JCGM 100:2008) annex H.1 models an end-gauge comparison: θ, δθ and δα instead of two
 * independent temperatures.
 *
 * Figures of H.1, and where each comes from:
 * - From MSL's GTC documentation of the example (docs/API/GUM_H1.rst, which transcribes H.1 into
 *   code): l_s = 50 000 623 nm, u = 25 nm, ν = 18; d̄ = 215 nm, u = 5.8 nm, ν = 24; comparator
 *   random 3.9 nm, ν = 5, and systematic 6.7 nm, ν = 8; α_s = 11.5×10⁻⁶/K, rectangular ±2×10⁻⁶/K;
 *   δα rectangular ±1×10⁻⁶/K, ν = 50; δθ rectangular ±0.05 K, ν = 2; θ̄ = −0.1 K with u = 0.2 K
 *   plus a cyclic Δ, arcsine of amplitude 0.5 K; l = 50 000 838(32) nm; its budget lines
 *   d_theta 16.599 nm, d_alpha 2.88679 nm, alpha_s 0, theta 0; with H.1.7's second-order terms
 *   u = 34 nm, "which agrees with the GUM".
 * - From memory of the GUM itself, not checked against a copy: that d̄'s 5.8 nm is s = 13 nm of an
 *   earlier series of 25 readings over √5 (hence ν = 24); u(θ) = √(0.2² + 0.35²) = 0.41 K; H.1.6's
 *   ν_eff = 16 (Welch–Satterthwaite gives 16.7, truncated), t₉₉(16) = 2.92 and U₉₉ = 93 nm; and
 *   that H.1.7 names l_s²u²(δα)u²(θ) and l_s²u²(α_s)u²(δθ) as the second-order terms that matter.
 *   The engine's own independent check of ν_eff and U₉₉ through Type A readings is in
 *   engine-examples.test.ts; Table G.2's t₉₉(16) = 2.92 is checked there with jstat.
 */
import { describe, expect, it } from 'vitest';
import { computeCalc } from '@shared/measure/calc';
import { calcRequestSchema, calcResponseSchema, type CalcRequestInput, type CalcResponse } from '@shared/measure/calc.schema';
import { coverageFactorFor, welchSatterthwaite } from '@shared/measure/coverage';
import { sameTemperatureSecondOrder, sameTemperatureSensitivities } from '@shared/measure/thermal';

const SQRT3 = Math.sqrt(3);

function run(request: CalcRequestInput): CalcResponse {
  const response = computeCalc(request);
  expect(calcResponseSchema.safeParse(response).success).toBe(true);
  return response;
}

function line(response: CalcResponse, source: RegExp) {
  const found = response.budget.filter((b) => source.test(b.source));
  expect(found, `one budget line matching ${source} in ${JSON.stringify(response.budget.map((b) => b.source))}`).toHaveLength(1);
  return found[0]!;
}

const nm = (mm: number) => mm * 1e6;

describe('GUM H.1 with the instrument at the part’s temperature', () => {
  // H.1.3: u(α_s) = 2×10⁻⁶/√3 (rectangular), u(δα) = 1×10⁻⁶/√3, u(δθ) = 0.05/√3 K, u(θ) from
  // θ̄'s 0.2 K and the cycle's arcsine 0.5/√2 K (GTC: type_b.arcsine(0.5)).
  const uAlphaS = 2e-6 / SQRT3;
  const uDeltaAlpha = 1e-6 / SQRT3;
  const uDeltaTheta = 0.05 / SQRT3;
  const uTheta = Math.hypot(0.2, 0.5 / Math.SQRT2);

  /**
   * The standard l_s is the reading the correction applies to (H.1.2 multiplies the thermal terms
   * by l_s); the standard is its "instrument", at the gauge's temperature 19.9 °C (θ = −0.1 K),
   * both steel with α = α_s = 11.5×10⁻⁶/K, so δα = 0. d is the comparator's difference, split into
   * its three parts as stated uncertainties of zero readings.
   */
  const h1: CalcRequestInput = {
    readings: {
      ls: {
        kind: 'direct',
        value: '50.000623',
        unit: 'mm',
        resolution: '0.000000001',
        uncertainty: '0.000025',
        instrument: 'standard',
        temperatureC: 19.9,
        expansionPerK: 11.5e-6,
        temperatureUncertaintyC: uTheta,
        instrumentTemperature: 'same-as-part',
        temperatureDifferenceUncertaintyC: uDeltaTheta,
        expansionDifferenceUncertaintyPerK: uDeltaAlpha,
      },
      d0: { kind: 'direct', value: '0.000215', unit: 'mm', resolution: '0.000000001', uncertainty: '0.0000058' },
      d1: { kind: 'direct', value: '0', unit: 'mm', resolution: '0.000000001', uncertainty: '0.0000039' },
      d2: { kind: 'direct', value: '0', unit: 'mm', resolution: '0.000000001', uncertainty: '0.0000067' },
    },
    instruments: { standard: { expansionPerK: 11.5e-6, expansionUncertaintyPerK: uAlphaS } },
    terms: ['ls', 'd0', 'd1', 'd2'].map((reading) => ({ reading, sign: 1 as const })),
    coverageProbability: 0.99,
  };

  it('gives l = 50.000838 mm with u_c = 32 nm and H.1’s lines for θ, δθ and δα', () => {
    const r = run(h1);
    expect(r.value).toBe(50.000838); // H.1.5: l = l_s + d = 50.000838 mm (GTC: 50000838 nm)
    expect(nm(r.standardUncertainty).toFixed(0)).toBe('32'); // H.1.4 / GTC: u_c(l) = 32 nm
    expect(r.method).toBe('gum');

    // δθ: c = −l_s·α_s = −575 nm/K (H.1.3); c·u = 16.599 nm (GTC budget "d_theta").
    const deltaTheta = line(r, /how far standard's temperature may be from the part's, δθ/);
    expect(deltaTheta.inputUnit).toBe('K');
    expect(deltaTheta.standardUncertainty).toBeCloseTo(0.029, 3); // H.1.3.6: u(δθ) = 0.029 °C
    expect(Math.round(nm(deltaTheta.sensitivity))).toBe(-575);
    expect(Math.abs(nm(deltaTheta.contribution))).toBeCloseTo(16.599, 3);

    // δα: c = −l_s·θ = 5 mm·K (H.1.3); c·u = 2.88679 nm (GTC budget "d_alpha").
    const deltaAlpha = line(r, /part and standard expanding differently, δα = α − α_s, u\(δα\)/);
    expect(deltaAlpha.inputUnit).toBe('1/K');
    expect(deltaAlpha.standardUncertainty * 1e6).toBeCloseTo(0.58, 2); // H.1.3.5: u(δα) = 0.58×10⁻⁶/°C
    expect(deltaAlpha.sensitivity).toBeCloseTo(5, 3);
    expect(Math.abs(nm(deltaAlpha.contribution))).toBeCloseTo(2.88679, 4);

    // θ and α_s: listed with their uncertainties, sensitivity 0 at the estimates (c_θ = −l_s·δα with
    // δα = 0; c_αs = −l_s·δθ with δθ = 0): GTC budget "theta 0", "alpha_s 0".
    const theta = line(r, /temperature of the part and standard together, θ/);
    expect(theta.standardUncertainty).toBeCloseTo(0.41, 2); // H.1.3.4 (from memory): u(θ) = 0.41 °C
    expect(theta.sensitivity).toBe(0);
    expect(theta.contribution).toBe(0);
    const alphaS = line(r, /expansion coefficient of standard/);
    expect(alphaS.standardUncertainty * 1e6).toBeCloseTo(1.2, 1); // H.1.3.2: u(α_s) = 1.2×10⁻⁶/°C
    expect(alphaS.instrument).toBe('standard');
    expect(alphaS.contribution).toBe(0);

    // u_c² = 25² + 5.8² + 3.9² + 6.7² + 16.6² + 2.9² nm² (Table H.1; the 1 pm resolutions are negligible).
    expect(nm(r.standardUncertainty)).toBeCloseTo(Math.hypot(25, 5.8, 3.9, 6.7, 16.599, 2.88679), 3);
    // No line for the instrument's own temperature: it is the part's.
    expect(r.budget.some((b) => /temperature of standard, u\(t_s\)/.test(b.source))).toBe(false);
  });

  it('gives ν_eff = 16 and U₉₉ = 93 nm with H.1’s degrees of freedom on the engine’s budget lines', () => {
    const r = run(h1);
    // The engine gives Type B inputs ν = ∞; H.1.6 gives them ν from their reliability (G.4.2).
    // Welch–Satterthwaite (G.4.1) over the engine's own contributions with H.1's ν:
    const dof = (source: string) =>
      /^ls: stated/.test(source) ? 18 : /^d0: stated/.test(source) ? 24 : /^d1: stated/.test(source) ? 5 : /^d2: stated/.test(source) ? 8 : /δθ/.test(source) ? 2 : /δα/.test(source) ? 50 : Infinity;
    const nuEff = welchSatterthwaite(r.budget.map((b) => ({ contribution: b.contribution, dof: dof(b.source) })));
    expect(Math.abs(nuEff - 16.7)).toBeLessThan(0.1); // from memory: Welch–Satterthwaite gives 16.7 …
    expect(Math.floor(nuEff)).toBe(16); // … and H.1.6 takes ν_eff = 16
    const k = coverageFactorFor(0.99, Math.floor(nuEff));
    expect(k).toBeCloseTo(2.92, 2); // Table G.2: t₉₉(16) = 2.92
    // U₉₉ = 2.92 × 32 nm = 93 nm (H.1.6, from memory); from the unrounded u_c = 31.67 nm it is 92.5 nm.
    expect(Math.abs(k * nm(r.standardUncertainty) - 93)).toBeLessThanOrEqual(2.92 * 0.5);
  });

  it('states H.1.7’s second-order terms in the working, and leaves them out of u_c', () => {
    const r = run(h1);
    // l_s·√(u²(δα)u²(θ) + u²(α_s)u²(δθ)) = 50 mm·√((0.577e-6 × 0.406)² + (1.155e-6 × 0.0289)²) = 11.84 nm.
    const second = sameTemperatureSecondOrder(0.050000623, { theta: uTheta, temperatureDifference: uDeltaTheta, expansionDifference: uDeltaAlpha, instrumentExpansion: uAlphaS });
    expect(second * 1e9).toBeCloseTo(11.84, 2);
    // With them, u_c = 34 nm (H.1.7, from memory; GTC's mul2 gives u = 34 and says it agrees with the GUM).
    expect(Math.hypot(nm(r.standardUncertainty), second * 1e9).toFixed(0)).toBe('34');
    expect(r.steps.some((s) => /^ls: second-order terms \(GUM H\.1\.7\), left out of the budget as in H\.1\.6: .* = 0\.000012 mm/.test(s))).toBe(true);
  });

  it('writes the model in H.1’s variables in the working', () => {
    const steps = run(h1).steps.join('\n');
    expect(steps).toMatch(/ls: part at 19\.9 °C .*; standard sits at the part's temperature, α_s = 11\.5×10⁻⁶\/K\. GUM H\.1's inputs: θ = t − 20 °C = −0\.1 K, δθ = t − t_s = 0 K, δα = α − α_s = 0×10⁻⁶\/K\./);
    expect(steps).toMatch(/to first order the correction is −L\(δα·θ \+ α_s·δθ\) \(GUM H\.1\.2\)/);
  });
});

describe('one temperature for part and instrument against two independent ones', () => {
  // 100 mm of aluminium alloy (α = 23.6×10⁻⁶/K, Callister Table B.6) read at 26 °C with a steel
  // micrometer (α_s = 11.7×10⁻⁶/K) lying beside it; one thermometer, u = 0.5 K.
  const reading = { kind: 'direct', value: '100.000', unit: 'mm', resolution: '0.001', instrument: 'mic', temperatureC: 26, temperatureUncertaintyC: 0.5, material: 'aluminium-alloy' } as const;
  const request = (extra: Record<string, unknown>, mic: Record<string, unknown> = {}): CalcRequestInput => ({
    readings: { d: { ...reading, ...extra } as CalcRequestInput['readings'][string] },
    instruments: { mic },
    terms: [{ reading: 'd', sign: 1 }],
  });
  const alpha = 23.6e-6;
  const alphaS = 11.7e-6;
  const theta = 6;
  const uRes = 0.001 / (2 * SQRT3);

  it('corrects to the same value as the instrument entered at the part’s temperature', () => {
    // L20 = L·(1 + α_s·θ)/(1 + α·θ) either way (GUM H.1; ISO 1).
    const same = run(request({ instrumentTemperature: 'same-as-part' }));
    const entered = run(request({}, { temperatureC: 26 }));
    expect(same.value).toBe(entered.value);
    expect(same.value).toBeCloseTo((100 * (1 + alphaS * theta)) / (1 + alpha * theta), 9);
  });

  it('with u(δθ) = 0 and equal coefficients leaves no thermal uncertainty but the δα term', () => {
    // Steel part, steel micrometer: δα = 0, so c_θ = −L·δα = 0 (GUM H.1.3): the common temperature's
    // 0.5 K adds nothing; only δα's u(α) through c_δα = −L·θ remains.
    const r = run(request({ material: 'steel', expansionUncertaintyPerK: 1e-6, instrumentTemperature: 'same-as-part', temperatureDifferenceUncertaintyC: 0 }));
    expect(line(r, /temperature of the part and mic together, θ/).contribution).toBe(0);
    expect(r.budget.some((b) => /δθ/.test(b.source))).toBe(false);
    const deltaAlpha = line(r, /part and mic expanding differently/);
    const l20 = r.value;
    expect(deltaAlpha.sensitivity).toBeCloseTo((-l20 * theta) / (1 + alphaS * theta), 12);
    expect(r.standardUncertainty).toBeCloseTo(Math.hypot((l20 * theta * 1e-6) / (1 + alphaS * theta), uRes), 12);
    // The same with no u(α): the result's u is the resolution's alone.
    const bare = run(request({ material: 'steel', instrumentTemperature: 'same-as-part' }));
    expect(bare.standardUncertainty).toBeCloseTo(uRes, 15);
    // Two independent temperatures with the same 0.5 K each count it twice, once through each
    // coefficient: √((Lα·0.5)² + (Lα_s·0.5)²) ≈ 0.83 µm where one shared temperature gives 0.
    const apart = run(request({ material: 'steel' }, { temperatureC: 26, temperatureUncertaintyC: 0.5 }));
    expect(apart.standardUncertainty * 1000).toBeGreaterThan(0.8);
  });

  it('with unlike metals counts the common temperature through δα only, and the difference through α_s', () => {
    const r = run(request({ instrumentTemperature: 'same-as-part', temperatureDifferenceUncertaintyC: 0.2 }));
    const l20 = r.value;
    const c = sameTemperatureSensitivities(l20, alpha, alphaS, 26);
    // c_θ = −L·δα and c_δθ = −L·α_s (GUM H.1.3) to first order; exact at δθ = 0 they differ by
    // factors 1 + αθ and 1 + α_sθ, a part in 10⁴ here.
    expect(c.commonTemperature / (-l20 * (alpha - alphaS)) - 1).toBeCloseTo(0, 3);
    expect(c.temperatureDifference / (-l20 * alphaS) - 1).toBeCloseTo(0, 3);
    expect(line(r, /θ = 6 K from 20 °C, u\(θ\) = 0\.5 K/).sensitivity).toBeCloseTo(c.commonTemperature, 15);
    expect(line(r, /u\(δθ\) = 0\.2 K/).sensitivity).toBeCloseTo(c.temperatureDifference, 15);
    expect(r.standardUncertainty).toBeCloseTo(Math.hypot(c.commonTemperature * 0.5, c.temperatureDifference * 0.2, uRes * (1 + alphaS * theta) / (1 + alpha * theta)), 12);
    // Against the part's and the instrument's temperatures taken apart with 0.5 K each, the
    // common temperature counts (α − α_s), not α and α_s separately.
    const apart = run(request({}, { temperatureC: 26, temperatureUncertaintyC: 0.5 }));
    expect(r.standardUncertainty).toBeLessThan(0.6 * apart.standardUncertainty);
  });

  it('matches the exact derivatives of L20 = L(1 + α_s(θ − δθ))/(1 + (α_s + δα)θ)', () => {
    const L = 0.1;
    const l20 = (th: number, dth: number, dAlpha: number, aS: number) => (L * (1 + aS * (th - dth))) / (1 + (aS + dAlpha) * th);
    const base = [theta, 0, alpha - alphaS, alphaS] as const;
    const numeric = (i: number, h: number) => {
      const up = [...base] as number[];
      const down = [...base] as number[];
      up[i]! += h;
      down[i]! -= h;
      return (l20(up[0]!, up[1]!, up[2]!, up[3]!) - l20(down[0]!, down[1]!, down[2]!, down[3]!)) / (2 * h);
    };
    const c = sameTemperatureSensitivities(l20(...base), alpha, alphaS, 20 + theta);
    expect(c.commonTemperature).toBeCloseTo(numeric(0, 1e-3), 12);
    expect(c.temperatureDifference).toBeCloseTo(numeric(1, 1e-3), 12);
    expect(c.expansionDifference).toBeCloseTo(numeric(2, 1e-6), 9);
    expect(c.instrumentExpansionDifferenceHeld).toBeCloseTo(numeric(3, 1e-6), 9);
  });
});

describe('a shared instrument at the part’s temperature', () => {
  const mic = { calibration: { expandedUncertainty: '0.0001', coverageFactor: 2, unit: 'in' as const }, expansionUncertaintyPerK: 1e-6 };
  const bore = { kind: 'direct', value: '4.0315', unit: 'in', instrument: 'mic', temperatureC: 30, temperatureUncertaintyC: 1, material: 'cast-iron', expansionUncertaintyPerK: 0.5e-6, instrumentTemperature: 'same-as-part', temperatureDifferenceUncertaintyC: 0.5 } as const;
  const piston = { ...bore, value: '4.0290', material: 'aluminium-alloy' } as const;

  it('keeps the calibration and its expansion coefficient one input each: a difference all but cancels them', () => {
    const r = run({ readings: { bore, piston }, instruments: { mic }, terms: [{ reading: 'bore', sign: 1 }, { reading: 'piston', sign: -1 }] });
    const calibration = line(r, /calibration of mic/);
    expect(calibration.reading).toBe('bore, piston');
    // Each reading's share is scaled by its correction (1 + α_sθ)/(1 + αθ) (GUM 5.2.2 with r = 1):
    // grey iron 11.4 and aluminium 23.6 ×10⁻⁶/K against steel's 11.7 (Callister Table B.6), θ = 10 K.
    const factor = (a: number) => (1 + 11.7e-6 * 10) / (1 + a * 10);
    expect(calibration.sensitivity).toBeCloseTo(factor(11.4e-6) - factor(23.6e-6), 12);
    expect(Math.abs(calibration.sensitivity)).toBeLessThan(2e-4);
    // α_s's sensitivities add: (L_bore20 − L_piston20)·θ/(1 + α_s·θ), the 0.0025 in difference times 10 K.
    const alphaS = line(r, /expansion coefficient of mic/);
    expect(alphaS.reading).toBe('bore, piston');
    expect(alphaS.instrument).toBe('mic');
    const [b20, p20] = [r.readings.bore!.value, r.readings.piston!.value];
    expect(alphaS.sensitivity).toBeCloseTo(((b20 - p20) * 10) / (1 + 11.7e-6 * 10), 9);
    // Each reading keeps its own θ, δθ and δα lines (its own thermometer reading, its own part).
    for (const key of ['bore', 'piston']) {
      for (const what of [/θ = 10 K/, /δθ/, /expanding differently/]) {
        expect(r.budget.filter((b) => b.reading === key && what.test(b.source))).toHaveLength(1);
      }
    }
  });

  it('merges with a reading of the same instrument taken at its own temperature', () => {
    const own = { kind: 'direct', value: '4.0290', unit: 'in', instrument: 'mic', temperatureC: 30, material: 'aluminium-alloy' } as const;
    const r = run({ readings: { bore, piston: own }, instruments: { mic: { ...mic, temperatureC: 30 } }, terms: [{ reading: 'bore', sign: 1 }, { reading: 'piston', sign: -1 }] });
    // Both readings put mic at 30 °C, so the shared α_s line's sensitivities are the same as above.
    const alphaS = line(r, /expansion coefficient of mic/);
    expect(alphaS.reading).toBe('bore, piston');
    const [b20, p20] = [r.readings.bore!.value, r.readings.piston!.value];
    expect(alphaS.sensitivity).toBeCloseTo(((b20 - p20) * 10) / (1 + 11.7e-6 * 10), 9);
    // mic's own temperature is said to be set aside for the same-as-part reading only.
    expect(r.steps.some((s) => s.startsWith("bore: mic's own temperature and its uncertainty are set aside"))).toBe(true);
    expect(r.steps.some((s) => s.startsWith("piston: mic's own temperature"))).toBe(false);
  });
});

describe('old requests', () => {
  it('give the figures they gave before the same-temperature model existed', () => {
    // Captured from the engine before this change (regression figures, no published source): a
    // 4 in aluminium bore at 27 °C read with a calibrated micrometer at 24 °C, each temperature
    // with its own uncertainty.
    const r = run({
      readings: { d: { kind: 'direct', value: '4.0315', unit: 'in', temperatureC: 27, temperatureUncertaintyC: 0.3, material: 'aluminium-alloy', instrument: 'mic' } },
      instruments: { mic: { calibration: { expandedUncertainty: '0.0001', coverageFactor: 2, unit: 'in' }, temperatureC: 24, temperatureUncertaintyC: 0.5, expansionUncertaintyPerK: 0.5e-6 } },
      terms: [{ reading: 'd', sign: 1 }],
      spec: { min: '4.030', max: '4.033', unit: 'in' },
    });
    const close = (actual: number, expected: number) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * 1e-12);
    close(r.value, 4.031022749242);
    close(r.standardUncertainty, 6.904933768055796e-5);
    close(r.expandedUncertainty, 0.00013533421501055187);
    expect(r.verdict).toBe('conforms');
    expect(r.budget.map((b) => b.source)).toEqual([
      'd: part temperature, u(t) = 0.3 K',
      'temperature of mic, u(t_s) = 0.5 K',
      'expansion coefficient of mic',
      'd: resolution 0.0001 in',
      'calibration of mic (U = 0.00010 in (2.5 µm), k = 2)',
    ]);
    const expected = [-9.51164236489244e-5, 4.716075904260821e-5, 16.123336424823318, 0.9998816195564492, 0.9998816195564492];
    r.budget.forEach((b, i) => close(b.sensitivity, expected[i]!));
  });
});

describe('the request’s new fields', () => {
  const base = { kind: 'direct', value: '1.000', unit: 'in', temperatureC: 25, material: 'steel' } as const;
  const issues = (reading: Record<string, unknown>) => {
    const parsed = calcRequestSchema.safeParse({ readings: { r: reading }, terms: [{ reading: 'r', sign: 1 }] });
    return parsed.success ? [] : parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
  };

  it('are refused by name where they cannot apply', () => {
    expect(issues({ ...base, instrumentTemperature: 'same-as-part', temperatureDifferenceUncertaintyC: 0.2 })).toEqual([]);
    expect(issues({ ...base, instrumentTemperature: 'beside-it' })[0]).toMatch(/^readings\.r\.instrumentTemperature: instrumentTemperature must be "same-as-part"/);
    expect(issues({ ...base, temperatureC: undefined, material: undefined, instrumentTemperature: 'same-as-part' })[0]).toMatch(/needs the part's temperatureC/);
    expect(issues({ kind: 'direct', value: '30', unit: 'N_m', temperatureC: 25, instrumentTemperature: 'same-as-part' })[0]).toMatch(/lengths only/);
    expect(issues({ ...base, temperatureDifferenceUncertaintyC: 0.2 })[0]).toMatch(/^readings\.r\.temperatureDifferenceUncertaintyC: .*send instrumentTemperature "same-as-part" with it/);
    expect(issues({ ...base, expansionDifferenceUncertaintyPerK: 1e-6 })[0]).toMatch(/^readings\.r\.expansionDifferenceUncertaintyPerK: /);
    expect(issues({ ...base, instrumentTemperature: 'same-as-part', temperatureDifferenceUncertaintyC: -1 })[0]).toMatch(/at least 0/);
  });
});
