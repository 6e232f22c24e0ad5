import { describe, expect, it } from 'vitest';
import { clearanceInputSchema, type Clearance, type ClearanceResult } from '@shared/clearances/clearance.schema';
import { computeClearance } from '@shared/clearances/clearance-calc';
import { formulaTemplate } from '@shared/measure/formula-templates';
import type { SpecVersion } from '@shared/specs/spec-library.schema';
import type { Reading } from '@shared/readings/reading.schema';
import {
  OWN_FORMULA,
  automaticResultUnit,
  blankClearanceForm,
  clearanceFormOf,
  clearanceFormPath,
  clearanceFormResolver,
  constantsForTemplate,
  modeOf,
  resultModel,
  suggestedClearanceName,
  termsForTemplate,
  toClearanceInput,
  unitChoiceLabel,
  versionSummary,
  type ClearanceFormContext,
  type ClearanceFormValues,
  type FormReading,
} from '../../../src/features/clearances/lib/clearance-form';
import { formulaLegend, isLengthResult, modelText, resultBandPictureProps } from '../../../src/features/clearances/lib/clearance-view';
import { endInUnit, intervalOf } from '../../../src/features/clearances/components/coverage-facts';
import { enteredFigures, estimateText } from '../../../src/features/readings/lib/reading-text';

/*
 * The result form's pure parts: which template makes which model, what the form sends, what it
 * loads back, and the figures of a result that is not a length. Invented engine figures, as in
 * the browser test. The compression ratio is the template's geometry (π/4·d²·h per cylinder) with
 * 1 in³ = 16.387064 cm³ exactly (NIST SP 811 (2008) B.8).
 */

let nextId = 1;
function reading(key: string, value: string, unit: FormReading['unit'], resolution: string): FormReading {
  const id = nextId++;
  return { id, key, name: key.replace(/-/g, ' '), unit, engine: { kind: 'direct', value, unit, resolution } as FormReading['engine'], engineInstrument: null };
}

const cr = {
  bore: reading('bore', '4.000', 'in', '0.0001'),
  stroke: reading('stroke', '3.480', 'in', '0.0001'),
  chamber: reading('chamber-1', '64.2', 'cc', '0.1'),
  gasketBore: reading('gasket-bore', '4.100', 'in', '0.0001'),
  gasketThickness: reading('gasket-thickness', '0.041', 'in', '0.0001'),
  deck: reading('deck-height', '0.010', 'in', '0.0001'),
  dish: reading('dish', '5.0', 'cc', '0.1'),
};
const all = Object.values(cr);
const byId = new Map(all.map((r) => [String(r.id), r]));
const context: ClearanceFormContext = { readings: byId };

function compressionRatioForm(): ClearanceFormValues {
  const blank = blankClearanceForm();
  const rows = termsForTemplate('compression-ratio', blank.terms);
  const pick: Record<string, FormReading> = {
    bore: cr.bore,
    stroke: cr.stroke,
    chamber: cr.chamber,
    'gasket-bore': cr.gasketBore,
    'gasket-thickness': cr.gasketThickness,
    'deck-height': cr.deck,
    dish: cr.dish,
  };
  return {
    ...blank,
    template: 'compression-ratio',
    name: 'Static compression ratio',
    key: 'compression-ratio',
    terms: rows.map((r) => ({ ...r, readingId: String(pick[r.symbol]!.id) })),
    constants: constantsForTemplate('compression-ratio', []),
  };
}

const ratioSpec: SpecVersion = {
  id: 9,
  specId: 3,
  version: 1,
  unit: '1',
  min: '9.8',
  max: '10.6',
  preferredMin: null,
  preferredMax: null,
  reject: null,
  rule: 'guarded',
  source: { kind: 'common-practice', text: 'Invented for this test' },
} as unknown as SpecVersion;

describe('the ways a result is made', () => {
  it('tells a signed sum, a formula template and a formula written by hand apart', () => {
    expect(modeOf('end-float')).toBe('sum');
    expect(modeOf('custom')).toBe('sum');
    expect(modeOf('compression-ratio')).toBe('template');
    expect(modeOf('intake-centreline')).toBe('template');
    expect(modeOf(OWN_FORMULA)).toBe('formula');
  });

  it('gives a formula template one row per slot, named as its formula names it, keeping readings picked by name', () => {
    const rows = termsForTemplate('compression-ratio', [{ readingId: '7', sign: '1', symbol: 'chamber' }]);
    expect(rows.map((r) => r.symbol)).toEqual(['bore', 'stroke', 'chamber', 'gasket-bore', 'gasket-thickness', 'deck-height', 'dish']);
    expect(rows.find((r) => r.symbol === 'chamber')!.readingId).toBe('7');
    expect(rows.filter((r) => r.readingId === '')).toHaveLength(6);
  });

  it('keeps the picked readings for a formula written by hand, each under its key unless named', () => {
    const rows = termsForTemplate(OWN_FORMULA, [{ readingId: String(cr.bore.id), sign: '-1', symbol: '' }, { readingId: '', sign: '1', symbol: '' }], (id) => byId.get(id)?.key);
    expect(rows).toEqual([{ readingId: String(cr.bore.id), sign: '1', symbol: 'bore' }]);
  });

  it('asks for the constants the builder supplies and leaves the fixed ones out', () => {
    expect(constantsForTemplate('stock-to-remove', [])).toEqual([{ name: 'target', value: '' }]);
    // Half a turn is fixed at 180°: nothing to type.
    expect(constantsForTemplate('intake-centreline', [])).toEqual([]);
    expect(constantsForTemplate('end-float', [{ name: 'x', value: '1' }])).toEqual([]);
  });

  it('names a one-reading template after its reading and the others after the template', () => {
    const lash = reading('lash-intake-1', '0.010', 'in', '0.001');
    expect(suggestedClearanceName('valve-lash', [{ readingId: String(lash.id), sign: '1', symbol: 'lash' }], [lash])).toBe('lash intake 1');
    expect(suggestedClearanceName('compression-ratio', [], [])).toBe('Static compression ratio');
    expect(suggestedClearanceName(OWN_FORMULA, [], [])).toBe('Result');
    expect(suggestedClearanceName('end-float', [], [])).toBe('End float');
  });
});

describe('the model the form hands the engine', () => {
  it('works out a compression ratio from the template exactly as the server does, and judges it against a ratio spec', () => {
    const values = compressionRatioForm();
    const model = resultModel(values, byId);
    expect(model.mode).toBe('template');
    expect(model.quantity).toBe('ratio');
    expect(model.complete).toBe(true);
    expect(model.issues).toEqual([]);
    expect(model.formula?.text).toBe(formulaTemplate('compression-ratio')!.formula);
    // Each reading goes by its slot's name (the server: term.symbol ?? reading.key).
    expect(model.terms.map((t) => t.key)).toEqual(['bore', 'stroke', 'chamber', 'gasket-bore', 'gasket-thickness', 'deck-height', 'dish']);

    const computed = computeClearance({ terms: model.terms, spec: ratioSpec, coverageFactor: null, formula: model.formula, resultUnit: null });
    expect(computed.ok ? [] : computed.problems).toEqual([]);
    if (!computed.ok) return;
    // Swept π/4·4²·3.48 in³ = 716.64 cc; clearance volume 64.2 + 8.871 (gasket) + 2.059 (deck) + 5.0 cc = 80.130 cc;
    // (716.64 + 80.130) / 80.130 = 9.9433.
    expect(computed.result.quantity).toBe('ratio');
    expect(computed.result.unit).toBe('1');
    expect(computed.result.value).toBeCloseTo(9.9433, 4);
    expect(computed.result.valueUm).toBeNull();
    // 9.8 + U ≤ 9.94 ≤ 10.6 − U with U ≈ 0.009: within spec by the guarded rule (ISO 14253-1).
    expect(computed.result.verdict).toBe('conforms');
    expect(computed.result.display).toMatch(/^9\.9\d+ ± 0\.0\d+ \(95 %, k = [\d.]+\)$/);
  });

  it('refuses a length plus a volume in the engine’s words, beside the formula', () => {
    const values: ClearanceFormValues = {
      ...blankClearanceForm(),
      template: OWN_FORMULA,
      terms: [
        { readingId: String(cr.bore.id), sign: '1', symbol: 'bore' },
        { readingId: String(cr.chamber.id), sign: '1', symbol: 'chamber' },
      ],
      formula: 'bore + chamber',
    };
    const model = resultModel(values, byId);
    expect(model.issues).toEqual([{ path: 'formula', message: 'bore + chamber: a length and a volume cannot be added' }]);
    expect(model.quantity).toBeNull();
    // The same words reach the form field on saving.
    const resolved = clearanceFormResolver(values, context, { fields: {}, shouldUseNativeValidation: false }) as { errors: { formula?: { message: string } } };
    expect(resolved.errors.formula?.message).toBe('bore + chamber: a length and a volume cannot be added');
  });

  it('names what the formula does not know, and notes readings it leaves unused', () => {
    const base = { ...blankClearanceForm(), template: OWN_FORMULA, terms: [{ readingId: String(cr.bore.id), sign: '1' as const, symbol: 'b' }, { readingId: String(cr.stroke.id), sign: '1' as const, symbol: 's' }] };
    expect(resultModel({ ...base, formula: 'b - piston' }, byId).issues[0]!.message).toContain('"piston" is not one of the readings or constants');
    const fine = resultModel({ ...base, formula: 'b / 2' }, byId);
    expect(fine.issues).toEqual([]);
    expect(fine.quantity).toBe('length');
    expect(fine.unused).toEqual(['s']);
  });

  it('reads a target with its unit, a bare number in the unit of the reading, and refuses a volume for a length', () => {
    const measured = reading('journal', '2.2485', 'in', '0.0001');
    const readings = new Map([[String(measured.id), measured]]);
    const form = (value: string): ClearanceFormValues => ({
      ...blankClearanceForm(),
      template: 'stock-to-remove',
      terms: [{ readingId: String(measured.id), sign: '1', symbol: 'measured' }],
      constants: [{ name: 'target', value }],
    });
    expect(resultModel(form('2.2480 in'), readings).formula?.constants).toEqual({ target: { value: '2.2480', unit: 'in' } });
    expect(resultModel(form('57.112 mm'), readings).formula?.constants).toEqual({ target: { value: '57.112', unit: 'mm' } });
    expect(resultModel(form('2.248'), readings).formula?.constants).toEqual({ target: { value: '2.248', unit: 'in' } });
    const wrong = resultModel(form('4 cc'), readings);
    expect(wrong.issues).toHaveLength(1);
    expect(wrong.issues[0]!.path).toBe('constants.0.value');
    expect(resultModel(form(''), readings).issues[0]).toEqual({ path: 'constants.0.value', message: 'enter the target size' });
  });

  it('sends the intake centreline with its fixed half turn, the symbols and no sign of its own', () => {
    const opens = reading('intake-opens', '12', 'deg', '1');
    const closes = reading('intake-closes', '44', 'deg', '1');
    const readings = new Map([opens, closes].map((r) => [String(r.id), r]));
    const values: ClearanceFormValues = {
      ...blankClearanceForm(),
      template: 'intake-centreline',
      name: 'Intake centreline',
      key: '',
      terms: [
        { readingId: String(opens.id), sign: '1', symbol: 'opening' },
        { readingId: String(closes.id), sign: '1', symbol: 'closing' },
      ],
      constants: [],
    };
    const input = toClearanceInput(values, readings);
    expect(input).toMatchObject({
      template: 'intake-centreline',
      formula: '(opening + closing + half-turn) / 2 - opening',
      constants: { 'half-turn': { value: '180', unit: 'deg' } },
      terms: [
        { readingId: opens.id, sign: 1, symbol: 'opening' },
        { readingId: closes.id, sign: 1, symbol: 'closing' },
      ],
      resultUnit: null,
    });
    expect(clearanceInputSchema.safeParse(input).success).toBe(true);
    // (12 + 44 + 180) / 2 − 12 = 106° after top dead centre (the template's own arithmetic).
    const model = resultModel(values, readings);
    const computed = computeClearance({ terms: model.terms, spec: null, coverageFactor: null, formula: model.formula });
    expect(computed.ok && computed.result.value).toBe(106);
  });

  it('sends a signed sum exactly as before: no formula, no constants, no symbols, no unit', () => {
    const values: ClearanceFormValues = { ...blankClearanceForm(), terms: [{ readingId: '4', sign: '1', symbol: '' }, { readingId: '5', sign: '-1', symbol: '' }] };
    expect(toClearanceInput(values)).toEqual({
      key: 'end-float',
      name: 'End float',
      template: 'end-float',
      terms: [
        { readingId: 4, sign: 1 },
        { readingId: 5, sign: -1 },
      ],
      formula: null,
      constants: {},
      resultUnit: null,
      specVersionId: null,
      coverageFactor: null,
      note: '',
    });
    expect(toClearanceInput({ ...values, resultUnit: 'mm' }).resultUnit).toBe('mm');
  });
});

describe('a stored formula result in the form again', () => {
  const stored = (over: Partial<Clearance>): Clearance =>
    ({
      id: 1,
      buildId: 1,
      key: 'compression-ratio',
      name: 'Static compression ratio',
      template: 'compression-ratio',
      terms: compressionRatioForm().terms.map((t) => ({ readingId: Number(t.readingId), readingKey: byId.get(t.readingId)!.key, readingName: byId.get(t.readingId)!.name, sign: 1, symbol: t.symbol })),
      formula: formulaTemplate('compression-ratio')!.formula,
      constants: {},
      resultUnit: null,
      specVersionId: 9,
      spec: { specId: 3, name: 'Ratio', version: 1, sourceKind: 'manual', sourceText: 'x', newerVersion: null },
      coverageFactor: null,
      note: '',
      reviewState: 'unchecked',
      result: null,
      problems: [],
      lockVersion: 2,
      createdAt: '',
      updatedAt: '',
      ...over,
    }) as Clearance;

  it('loads a template result back into its template, each reading in its slot', () => {
    const form = clearanceFormOf(stored({}));
    expect(form.template).toBe('compression-ratio');
    expect(form.terms.map((t) => [t.symbol, byId.get(t.readingId)?.key])).toEqual([
      ['bore', 'bore'],
      ['stroke', 'stroke'],
      ['chamber', 'chamber-1'],
      ['gasket-bore', 'gasket-bore'],
      ['gasket-thickness', 'gasket-thickness'],
      ['deck-height', 'deck-height'],
      ['dish', 'dish'],
    ]);
    expect(form.specVersionId).toBe('9');
    // And sends the same body it was stored from.
    expect(toClearanceInput(form, byId)).toMatchObject({ template: 'compression-ratio', formula: formulaTemplate('compression-ratio')!.formula, constants: {} });
  });

  it('loads a template constant as it would be typed', () => {
    const form = clearanceFormOf(
      stored({ template: 'stock-to-remove', formula: 'measured - target', terms: [{ readingId: 1, readingKey: 'journal', readingName: 'Journal', sign: 1, symbol: 'measured' }], constants: { target: { value: '2.2480', unit: 'in' } } }),
    );
    expect(form.template).toBe('stock-to-remove');
    expect(form.constants).toEqual([{ name: 'target', value: '2.2480 in' }]);
  });

  it('loads a formula that no longer matches its template as a formula written by hand', () => {
    const form = clearanceFormOf(stored({ template: null, formula: 'chamber / 2', resultUnit: 'ml', constants: { k: { value: 2, unit: '1' } } }));
    expect(form.template).toBe(OWN_FORMULA);
    expect(form.formula).toBe('chamber / 2');
    expect(form.resultUnit).toBe('ml');
    expect(form.constants).toEqual([{ name: 'k', value: '2' }]);
    expect(form.terms[2]).toMatchObject({ symbol: 'chamber', sign: '1' });
  });

  it('puts the server’s refusals of symbols and constants beside their own fields', () => {
    expect(clearanceFormPath('terms.2.symbol')).toBe('terms.2.symbol');
    expect(clearanceFormPath('terms.2')).toBe('terms.2.readingId');
    expect(clearanceFormPath('constants.target.value', [{ name: 'x', value: '' }, { name: 'target', value: '1 in' }])).toBe('constants.1.value');
    expect(clearanceFormPath('formula')).toBe('formula');
  });
});

describe('units of a result', () => {
  it('states it in the spec’s unit when that is of its quantity, else the first reading’s, else the metric one', () => {
    expect(automaticResultUnit('length', 'thou', ['in'])).toBe('thou');
    expect(automaticResultUnit('length', '1', ['in', 'mm'])).toBe('in');
    expect(automaticResultUnit('volume', null, ['in'])).toBe('cc');
    expect(automaticResultUnit('ratio', null, ['in', 'cc'])).toBe('1');
  });

  it('words units for the picker, a ratio as having none', () => {
    expect(unitChoiceLabel('1')).toBe('no unit (a ratio)');
    expect(unitChoiceLabel('cc')).toContain('(cc)');
  });

  it('summarises a ratio spec without a unit and a length spec as before', () => {
    expect(versionSummary({ unit: '1', min: '9.8', max: '10.6', preferredMin: null, preferredMax: null, reject: null, rule: 'guarded' })).toBe('9.8–10.6 · guarded rule');
    expect(versionSummary({ unit: 'in', min: '0.002', max: '0.005', preferredMin: null, preferredMax: null, reject: '0.006', rule: 'simple' })).toBe('0.002–0.005 in · reject at or above 0.006 · simple rule');
    expect(versionSummary({ unit: 'cc', min: '63.5', max: '65.0', preferredMin: null, preferredMax: null, reject: null, rule: 'guarded' })).toBe('63.5–65.0 cc · guarded rule');
  });
});

describe('a result that is not a length, on the card', () => {
  const ratio: ClearanceResult = {
    quantity: 'ratio',
    unit: '1',
    valueUm: null,
    standardUncertaintyUm: null,
    expandedUncertaintyUm: null,
    value: 10.4,
    standardUncertainty: 0.055,
    expandedUncertainty: 0.11,
    interval: [10.29, 10.51],
    bandInUnit: { min: 9.8, max: 10.6, preferredMin: null, preferredMax: null, reject: null },
    coverageFactor: 2,
    display: '10.40 ± 0.11 (95 %, k = 2)',
    verdict: 'conforms',
    preferredVerdict: null,
    rejectVerdict: null,
    rule: 'guarded',
    band: null,
    steps: [],
    method: 'gum',
    coverageProbability: 0.95,
  };

  it('goes by its own unit, not by micrometres', () => {
    expect(isLengthResult(ratio)).toBe(false);
    expect(intervalOf(ratio)).toEqual([10.29, 10.51]);
    // U = 0.11 has two decimals (GUM 7.2.6), so the ends have two.
    expect(endInUnit(ratio)(10.29)).toBe('10.29');
    // U = 0.3 cc is 0.30 cc at two significant digits: the end has two decimals too.
    expect(endInUnit({ ...ratio, unit: 'cc', expandedUncertainty: 0.3 })(63.9)).toBe('63.90 cc');
  });

  it('draws the band picture in its unit with the guarded limits moved in by U', () => {
    const picture = resultBandPictureProps(ratio)!;
    expect(picture.unit).toBe('1');
    expect(picture.band).toEqual({ min: 9.8, max: 10.6 });
    expect(picture.limits.acceptMin).toBeCloseTo(9.91, 10);
    expect(picture.limits.acceptMax).toBeCloseTo(10.49, 10);
    expect(picture.limits.rejectBelow).toBeCloseTo(9.69, 10);
    expect(picture.limits.rejectAbove).toBeCloseTo(10.71, 10);
    expect(picture.asymmetric).toBe(false);
    expect(picture.decimals).toBe(2);
    // Without a spec there is no picture; a length keeps its own.
    expect(resultBandPictureProps({ ...ratio, bandInUnit: null, verdict: null, rule: null })).toBeNull();
  });

  it('shows a formula with what its names stand for', () => {
    const c = {
      formula: 'measured - target',
      terms: [{ readingId: 1, readingKey: 'journal-1', readingName: 'Journal 1', sign: 1 as const, symbol: 'measured' }],
      constants: { target: { value: '2.2480', unit: 'in' as const } },
    };
    expect(modelText(c)).toBe('measured - target');
    expect(formulaLegend(c)).toEqual([
      { name: 'measured', meaning: 'Journal 1 (journal-1)', reading: true },
      { name: 'target', meaning: '2.2480 in', reading: false },
    ]);
    expect(modelText({ formula: null, terms: [{ readingKey: 'a', sign: 1 }, { readingKey: 'b', sign: -1 }] })).toBe('a − b');
    expect(formulaLegend({ formula: null, terms: [], constants: {} })).toEqual([]);
  });

  it('writes a cc reading, as the form and the review screen show it, as typed and with its uncertainty in cc', () => {
    const chamber = {
      kind: 'direct',
      unit: 'cc',
      entered: { value: '64.2' },
      value: '64.2',
      passes: null,
      stops: null,
      values: null,
      result: { quantity: 'volume', valueUm: null, standardUncertaintyUm: null, value: 64.2, standardUncertainty: 0.029, display: '64.2 cc', steps: [] },
    } as unknown as Reading;
    expect(enteredFigures(chamber)).toBe('64.2 cc');
    expect(enteredFigures({ ...chamber, entered: { value: '64.2 ml' } } as Reading)).toBe('64.2 ml');
    expect(estimateText(chamber)).toBe('64.2 cc ± 0.029 cc');
  });
});
