import type { FieldErrors, Resolver } from 'react-hook-form';
import { calcRequestSchema, TEMPERATURE_RANGE_C, type CalcRequest } from '@shared/measure/calc.schema';
import { formulaTemplates, type FormulaTemplate } from '@shared/measure/formula-templates';
import { convertNumber, isAnyUnit, quantityOf, type AnyUnit, type QuantityKind, type TemperatureScale } from '@shared/measure/quantities';
import type { DecisionRule } from '@shared/measure/spec';
import { lookupMaterial } from '@shared/measure/thermal';
import type { DefaultUnits } from '@/features/auth/lib/default-units';
import { temperatureOf } from '@/features/readings/lib/reading-form';
import { startingUnit, temperatureSymbol } from './units-ui';

/** How a reading takes part in a signed sum. */
export type TermSign = 'plus' | 'minus' | 'none';

/** The kinds of reading the page offers (the API's `kind`). */
export type ReadingKind = 'direct' | 'bracket' | 'blade' | 'repeated';

/** One reading as typed. Figures are text, so "0.5640" keeps its four places. */
export interface ReadingRow {
  name: string;
  kind: ReadingKind;
  unit: AnyUnit;
  /** Used in the signed-sum model only. */
  sign: TermSign;
  /** Key of an instrument in `instruments`, or "". */
  instrument: string;
  value: string;
  resolution: string;
  uncertainty: string;
  zeroOffset: string;
  /** The part's temperature as typed, in the form's `temperatureScale`; sent in °C. */
  temperatureC: string;
  /** u(t) as typed, a difference in the form's scale (°F or K); sent in K. */
  temperatureUncertaintyC: string;
  /** "same-as-part": the instrument sits at the part's temperature (GUM H.1); "": at its own. */
  instrumentTemperature: '' | 'same-as-part';
  /** With "same-as-part": u(δθ), how far the two temperatures may differ, in the form's scale; sent in K. */
  temperatureDifferenceUncertaintyC: string;
  /** A material key, "custom" (use expansionPerK) or "" (no correction). */
  material: string;
  expansionPerK: string;
  passes: string;
  stops: string;
  passesFeel: '' | 'slides' | 'drags';
  stopsFeel: '' | 'does-not-enter' | 'forced';
  thickness: string;
  spread: string;
  values: string;
  /** What to measure, from a template; shown, not sent. */
  hint: string;
}

/** An instrument the readings may name: a calibration or a maker's maximum permissible error. */
export interface InstrumentRow {
  name: string;
  basis: 'calibration' | 'mpe';
  /** U (calibration) or ±MPE, in `unit`. */
  figure: string;
  coverageFactor: string;
  unit: AnyUnit;
  /** As typed, in the form's `temperatureScale`; sent in °C. */
  temperatureC: string;
}

/** A named exact constant of a formula. */
export interface ConstantRow {
  name: string;
  value: string;
  unit: AnyUnit;
  hint: string;
}

/** The whole calculator form. */
export interface CalcFormValues {
  readings: ReadingRow[];
  instruments: InstrumentRow[];
  model: 'sum' | 'formula';
  /** Id of the formula template last applied, or "". */
  template: string;
  formula: string;
  constants: ConstantRow[];
  /** "" lets the engine choose (the spec's unit, else the model's own). */
  resultUnit: AnyUnit | '';
  spec: {
    enabled: boolean;
    unit: AnyUnit;
    min: string;
    max: string;
    rule: DecisionRule;
    preferredMin: string;
    preferredMax: string;
    reject: string;
    /** Shown on the page only. */
    source: string;
  };
  coverage: {
    mode: 'default' | 'probability' | 'factor';
    /** Percent, e.g. "99". */
    probability: string;
    factor: string;
  };
  /** Key of a diameter reading to state a length result per inch / per 25 mm of, or "". */
  diameter: string;
  /** The scale temperatures are typed in: the signed-in builder's (°C when signed out). */
  temperatureScale: TemperatureScale;
}

/** An empty reading row. */
export function blankReading(n: number, unit: AnyUnit = 'in'): ReadingRow {
  return {
    name: `reading ${n}`,
    kind: 'direct',
    unit,
    sign: 'plus',
    instrument: '',
    value: '',
    resolution: '',
    uncertainty: '',
    zeroOffset: '',
    temperatureC: '',
    temperatureUncertaintyC: '',
    instrumentTemperature: '',
    temperatureDifferenceUncertaintyC: '',
    material: '',
    expansionPerK: '',
    passes: '',
    stops: '',
    passesFeel: '',
    stopsFeel: '',
    thickness: '',
    spread: '',
    values: '',
    hint: '',
  };
}

/** An empty instrument row. */
export function blankInstrument(n: number, unit: AnyUnit = 'in'): InstrumentRow {
  return { name: `instrument ${n}`, basis: 'calibration', figure: '', coverageFactor: '2', unit, temperatureC: '' };
}

/** An empty constant row. */
export function blankConstant(n: number, unit: AnyUnit = 'in'): ConstantRow {
  return { name: `constant${n}`, value: '', unit, hint: '' };
}

const blankSpec: CalcFormValues['spec'] = {
  enabled: false,
  unit: 'in',
  min: '',
  max: '',
  rule: 'guarded',
  preferredMin: '',
  preferredMax: '',
  reject: '',
  source: '',
};

const base: CalcFormValues = {
  readings: [],
  instruments: [],
  model: 'sum',
  template: '',
  formula: '',
  constants: [],
  resultUnit: '',
  spec: blankSpec,
  coverage: { mode: 'default', probability: '99', factor: '2' },
  diameter: '',
  temperatureScale: 'degC',
};

/**
 * Rows, constants, formula and result unit for a template, in the builder's default units when
 * given, else in the unit system of the first reading on the page. Fixed constants come filled
 * in; the builder types the readings and the other constants.
 */
export function applyTemplate(values: CalcFormValues, template: FormulaTemplate, defaults?: DefaultUnits): CalcFormValues {
  const near = values.readings[0]?.unit;
  const readings = template.slots.map((slot, i) => ({
    ...blankReading(i + 1, slot.unit ?? startingUnit(slot.quantity, near, defaults)),
    name: slot.key,
    hint: `${slot.label}: ${slot.hint}`,
  }));
  const constants = template.constants.map((c, i) => ({
    ...blankConstant(i + 1, c.fixed?.unit ?? startingUnit(c.quantity, near, defaults)),
    name: c.key,
    value: c.fixed?.value ?? '',
    hint: `${c.label}: ${c.hint}`,
  }));
  const resultUnit = startingUnit(template.result, near, defaults);
  return {
    ...values,
    readings,
    constants,
    instruments: [],
    model: 'formula',
    template: template.id,
    formula: template.formula,
    resultUnit,
    spec: { ...blankSpec, unit: resultUnit },
    diameter: '',
  };
}

function template(id: string): FormulaTemplate {
  const found = formulaTemplates.find((t) => t.id === id);
  if (!found) throw new Error(`no formula template ${id}`);
  return found;
}

function fill(values: CalcFormValues, figures: Record<string, Partial<ReadingRow>>): CalcFormValues {
  return { ...values, readings: values.readings.map((row) => ({ ...row, ...figures[row.name] })) };
}

/** Worked examples. Figures are common workshop practice (no published source), for trying the page. */
export const examples: { id: string; title: string; values: CalcFormValues }[] = [
  {
    id: 'end-float',
    title: 'End float: bore depth − component height',
    values: {
      ...base,
      readings: [
        { ...blankReading(1), name: 'bore depth', value: '0.5642', resolution: '0.0001' },
        { ...blankReading(2), name: 'component height', sign: 'minus', value: '0.5595', resolution: '0.0001' },
      ],
      spec: { ...blankSpec, enabled: true, min: '0.003', max: '0.005', source: 'Example figures (common practice, no published source)' },
    },
  },
  {
    id: 'oil-pump',
    title: 'Oil pump: rotor to body, feeler blades',
    values: {
      ...base,
      readings: [
        { ...blankReading(1), name: 'rotor to body', kind: 'bracket', passes: '0.004', stops: '0.005', passesFeel: 'drags', stopsFeel: 'does-not-enter' },
      ],
      spec: {
        ...blankSpec,
        enabled: true,
        min: '0.003',
        max: '0.008',
        preferredMin: '0.003',
        preferredMax: '0.004',
        reject: '0.008',
        source: 'Example figures: 0.003–0.004 in ideal, 0.008 in and over scrap (common practice, no published source)',
      },
    },
  },
  {
    id: 'valve-lash',
    title: 'Valve lash: one dragging blade',
    values: {
      ...base,
      readings: [{ ...blankReading(1), name: 'lash', kind: 'blade', thickness: '0.012' }],
      spec: { ...blankSpec, enabled: true, min: '0.010', max: '0.014', source: 'Example figures (common practice, no published source)' },
    },
  },
  {
    id: 'piston-to-bore',
    title: 'Piston to bore: one micrometer for both',
    values: {
      ...base,
      readings: [
        { ...blankReading(1), name: 'bore', kind: 'repeated', values: '4.0315 4.0316 4.0314 4.0315', instrument: 'mic-1' },
        { ...blankReading(2), name: 'piston', sign: 'minus', value: '4.0290', instrument: 'mic-1' },
      ],
      instruments: [{ ...blankInstrument(1), name: 'mic 1', figure: '0.00010', coverageFactor: '2' }],
      spec: { ...blankSpec, enabled: true, min: '0.0020', max: '0.0030', source: 'Example figures (common practice, no published source)' },
    },
  },
  {
    id: 'compression-ratio',
    title: 'Compression ratio (formula)',
    values: (() => {
      const v = fill(applyTemplate(base, template('compression-ratio')), {
        bore: { value: '4.030' },
        stroke: { value: '3.480' },
        chamber: { kind: 'repeated', values: '64.0 64.2 63.9' },
        'gasket-bore': { value: '4.100' },
        'gasket-thickness': { value: '0.040' },
        'deck-height': { value: '0.005' },
        dish: { value: '5.0' },
      });
      return { ...v, spec: { ...v.spec, enabled: true, min: '9.8', max: '10.5', source: 'Example figures (common practice, no published source)' } };
    })(),
  },
];

/** What the page starts with. */
export const initialValues: CalcFormValues = examples[0]!.values;

/** A problem tied to a form field path (react-hook-form dot path) or to the form as a whole (""). */
export interface FormIssue {
  field: string;
  message: string;
}

/** The form read into an API request (unvalidated), and the row index of each key. */
export interface ReadForm {
  request: unknown;
  keyOfRow: string[];
  keyOfInstrument: string[];
  issues: FormIssue[];
}

/** A key from a name: "bore depth" → "bore-depth" (reading, instrument and constant keys alike). */
export function keyFromName(name: string, index: number, prefix = 'r'): string {
  const slug = name
    .trim()
    .toLowerCase()
    .replace(/[^a-z0-9_]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40);
  return /^[a-z]/.test(slug) ? slug : `${prefix}${index + 1}${slug ? `-${slug}` : ''}`.slice(0, 40);
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)$/;

/** The quantity a model gives when the page can tell before working it out, else null. */
export function knownQuantity(values: CalcFormValues, lastQuantity: string | null): QuantityKind | null {
  if (values.model === 'sum') {
    const first = values.readings.find((row) => row.sign !== 'none');
    return first && isAnyUnit(first.unit) ? quantityOf(first.unit) : null;
  }
  const chosen = formulaTemplates.find((t) => t.id === values.template);
  if (chosen && chosen.formula === values.formula.trim()) return chosen.result;
  return lastQuantity && (['length', 'volume', 'angle', 'torque', 'pressure', 'temperature', 'time', 'mass', 'ratio'] as string[]).includes(lastQuantity)
    ? (lastQuantity as QuantityKind)
    : null;
}

/**
 * Reads the typed form into the API's request shape. Figures go as the decimal text typed, so
 * their trailing zeros, and the resolution they imply, reach the engine.
 */
export function readForm(values: CalcFormValues): ReadForm {
  const issues: FormIssue[] = [];
  const keyOfRow: string[] = [];
  const keyOfInstrument: string[] = [];
  const readings: Record<string, unknown> = {};
  const terms: { reading: string; sign: 1 | -1 }[] = [];
  const seen = new Map<string, number>();

  /** A figure as decimal text, or undefined when blank (an issue when required and blank or malformed). */
  const figure = (field: string, text: string, required: boolean): string | undefined => {
    const t = text.trim().replace(/^−/, '-');
    if (t === '') {
      if (required) issues.push({ field, message: 'Enter a number.' });
      return undefined;
    }
    if (!DECIMAL.test(t)) {
      issues.push({ field, message: /\d,\d/.test(t) ? 'Use a decimal point, not a comma.' : 'Type the number alone, e.g. 0.5640; its unit is chosen beside it.' });
      return undefined;
    }
    return t;
  };
  const plain = (field: string, text: string, what: string): number | undefined => {
    const t = text.trim().replace(/^−/, '-');
    if (t === '') return undefined;
    const n = Number(t);
    if (!Number.isFinite(n) || !/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t)) {
      issues.push({ field, message: `Enter ${what} as a number.` });
      return undefined;
    }
    return n;
  };
  const set = (target: Record<string, unknown>, key: string, value: unknown) => {
    if (value !== undefined) target[key] = value;
  };
  // Temperatures are typed in the builder's scale and sent in °C; their uncertainties are differences (°F → K is × 5/9, no offset).
  const scale = values.temperatureScale ?? 'degC';
  const degrees = temperatureSymbol(scale);
  const temperature = (field: string, text: string): number | undefined => {
    if (plain(field, text, `the temperature in ${degrees}`) === undefined) return undefined;
    const celsius = temperatureOf(text, scale);
    return typeof celsius === 'number' ? celsius : undefined;
  };
  const temperatureSpread = (field: string, text: string, what: string): number | undefined => {
    const n = plain(field, text, `${what} in ${scale === 'degF' ? '°F' : 'K'}`);
    return n === undefined || scale === 'degC' ? n : convertNumber(n, 'degF', 'degC', { difference: true });
  };

  const instruments: Record<string, unknown> = {};
  values.instruments.forEach((row, i) => {
    const at = (name: string) => `instruments.${i}.${name}`;
    const key = keyFromName(row.name, i, 'i');
    keyOfInstrument.push(key);
    if (Object.hasOwn(instruments, key)) issues.push({ field: at('name'), message: 'Another instrument has this name; give each its own.' });
    const instrument: Record<string, unknown> = {};
    const f = figure(at('figure'), row.figure, true);
    if (row.basis === 'calibration') {
      const k = plain(at('coverageFactor'), row.coverageFactor, 'the coverage factor k');
      if (k === undefined && row.coverageFactor.trim() === '') issues.push({ field: at('coverageFactor'), message: 'Enter the certificate’s k (usually 2).' });
      if (f !== undefined && k !== undefined) instrument.calibration = { expandedUncertainty: f, coverageFactor: k, unit: row.unit };
    } else if (f !== undefined) {
      instrument.maxPermissibleError = { value: f, unit: row.unit };
    }
    set(instrument, 'temperatureC', temperature(at('temperatureC'), row.temperatureC));
    instruments[key] = instrument;
  });

  values.readings.forEach((row, i) => {
    const at = (name: string) => `readings.${i}.${name}`;
    const key = keyFromName(row.name, i);
    keyOfRow.push(key);
    if (seen.has(key)) issues.push({ field: at('name'), message: `Another reading is already called "${row.name.trim()}"; give each a different name.` });
    seen.set(key, i);
    const u = row.unit;
    const reading: Record<string, unknown> = { kind: row.kind, unit: u };
    if (row.instrument) reading.instrument = row.instrument;
    const thermalFields = () => {
      const t = temperature(at('temperatureC'), row.temperatureC);
      if (t === undefined) return;
      reading.temperatureC = t;
      set(reading, 'temperatureUncertaintyC', temperatureSpread(at('temperatureUncertaintyC'), row.temperatureUncertaintyC, 'u(t)'));
      if (!isAnyUnit(u) || quantityOf(u) !== 'length') return;
      if (row.instrumentTemperature === 'same-as-part') {
        reading.instrumentTemperature = 'same-as-part';
        set(reading, 'temperatureDifferenceUncertaintyC', temperatureSpread(at('temperatureDifferenceUncertaintyC'), row.temperatureDifferenceUncertaintyC ?? '', 'u(δθ)'));
      }
      if (row.material === 'custom') {
        const alpha = plain(at('expansionPerK'), row.expansionPerK, 'the coefficient per K (e.g. 11.7e-6)');
        if (alpha !== undefined) reading.expansionPerK = alpha;
        else issues.push({ field: at('expansionPerK'), message: 'Enter the coefficient per K, e.g. 11.7e-6.' });
      } else if (row.material && lookupMaterial(row.material)) {
        reading.material = row.material;
      } else {
        issues.push({ field: at('material'), message: 'Choose the part’s material to correct to 20 °C, or clear the temperature.' });
      }
    };
    if ((row.kind === 'bracket' || row.kind === 'blade') && (!isAnyUnit(u) || quantityOf(u) !== 'length')) {
      issues.push({ field: at('unit'), message: 'Feeler blades measure a length: choose in, thou, mm or another length unit.' });
    }
    if (row.kind === 'direct') {
      reading.value = figure(at('value'), row.value, true);
      set(reading, 'resolution', figure(at('resolution'), row.resolution, false));
      set(reading, 'uncertainty', figure(at('uncertainty'), row.uncertainty, false));
      set(reading, 'zeroOffset', figure(at('zeroOffset'), row.zeroOffset, false));
      thermalFields();
    } else if (row.kind === 'bracket') {
      reading.passes = figure(at('passes'), row.passes, true);
      reading.stops = figure(at('stops'), row.stops, true);
      if (row.passesFeel) reading.passesFeel = row.passesFeel;
      if (row.stopsFeel) reading.stopsFeel = row.stopsFeel;
    } else if (row.kind === 'blade') {
      reading.thickness = figure(at('thickness'), row.thickness, true);
      reading.feel = 'drags';
      set(reading, 'spread', figure(at('spread'), row.spread, false));
    } else {
      const text = row.values.trim();
      const parts = text.split(/[\s;]+/).filter(Boolean);
      if (parts.length < 2) issues.push({ field: at('values'), message: 'Enter at least two values, separated by spaces or new lines.' });
      const before = issues.length;
      reading.values = parts.map((part) => figure(at('values'), part, true));
      if (issues.length - before > 1) issues.splice(before + 1);
      set(reading, 'resolution', figure(at('resolution'), row.resolution, false));
      set(reading, 'uncertainty', figure(at('uncertainty'), row.uncertainty, false));
      set(reading, 'zeroOffset', figure(at('zeroOffset'), row.zeroOffset, false));
      thermalFields();
    }
    readings[key] = reading;
    if (values.model === 'sum' && row.sign !== 'none') terms.push({ reading: key, sign: row.sign === 'minus' ? -1 : 1 });
  });

  const request: Record<string, unknown> = { readings };
  if (values.instruments.length > 0) request.instruments = instruments;
  if (values.model === 'sum') {
    if (terms.length === 0) issues.push({ field: '', message: 'Choose + or − for at least one reading to build the sum.' });
    request.terms = terms;
  } else {
    if (values.formula.trim() === '') issues.push({ field: 'formula', message: 'Write the formula over the reading names, e.g. bore - piston.' });
    request.formula = values.formula;
    if (values.constants.length > 0) {
      const constants: Record<string, unknown> = {};
      values.constants.forEach((row, i) => {
        const at = (name: string) => `constants.${i}.${name}`;
        const name = row.name.trim();
        if (Object.hasOwn(constants, name)) issues.push({ field: at('name'), message: 'Another constant has this name.' });
        constants[name] = { value: figure(at('value'), row.value, true), unit: row.unit };
      });
      request.constants = constants;
    }
  }
  if (values.resultUnit) request.resultUnit = values.resultUnit;

  if (values.spec.enabled) {
    const s = values.spec;
    const spec: Record<string, unknown> = { unit: s.unit, rule: s.rule };
    set(spec, 'min', figure('spec.min', s.min, false));
    set(spec, 'max', figure('spec.max', s.max, false));
    const pMin = figure('spec.preferredMin', s.preferredMin, false);
    const pMax = figure('spec.preferredMax', s.preferredMax, false);
    if (pMin !== undefined || pMax !== undefined) spec.preferred = { ...(pMin !== undefined && { min: pMin }), ...(pMax !== undefined && { max: pMax }) };
    set(spec, 'reject', figure('spec.reject', s.reject, false));
    request.spec = spec;
    const num = (t: string | undefined) => (t === undefined ? undefined : Number(t));
    const [lo, hi, plo, phi] = [num(spec.min as string), num(spec.max as string), num(pMin), num(pMax)];
    if ((plo !== undefined && ((lo !== undefined && plo < lo) || (hi !== undefined && plo > hi))) || (phi !== undefined && ((hi !== undefined && phi > hi) || (lo !== undefined && phi < lo)))) {
      issues.push({ field: 'spec.preferredMin', message: 'The preferred band must lie inside the spec limits.' });
    }
  }

  const c = values.coverage;
  if (c.mode === 'probability') {
    const p = plain('coverage.probability', c.probability, 'the coverage probability in %');
    if (p !== undefined) request.coverageProbability = p / 100;
    else if (c.probability.trim() === '') issues.push({ field: 'coverage.probability', message: 'Enter a coverage probability, e.g. 99.' });
  } else if (c.mode === 'factor') {
    const k = plain('coverage.factor', c.factor, 'the coverage factor k');
    if (k !== undefined) request.coverageFactor = k;
    else if (c.factor.trim() === '') issues.push({ field: 'coverage.factor', message: 'Enter k, e.g. 2.' });
  }
  return { request, keyOfRow, keyOfInstrument, issues };
}

const readingFields = [
  'value', 'resolution', 'uncertainty', 'zeroOffset', 'temperatureC', 'temperatureUncertaintyC', 'instrumentTemperature', 'temperatureDifferenceUncertaintyC', 'expansionPerK', 'material',
  'passes', 'stops', 'passesFeel', 'stopsFeel', 'thickness', 'spread', 'values', 'unit', 'instrument',
];

/** Maps an API issue path (from the schema or the engine) back to the form field it came from, or "". */
export function fieldOfIssue(path: readonly PropertyKey[], read: Pick<ReadForm, 'keyOfRow' | 'keyOfInstrument'>, values: CalcFormValues): string {
  const [head, second, third] = path;
  if (head === 'readings' && typeof second === 'string') {
    const row = read.keyOfRow.indexOf(second);
    if (row < 0) return '';
    const field = typeof third === 'string' && readingFields.includes(third) ? third : 'value';
    const kind = values.readings[row]?.kind;
    if (field === 'value' && kind && kind !== 'direct') return `readings.${row}.${kind === 'bracket' ? 'passes' : kind === 'blade' ? 'thickness' : 'values'}`;
    return `readings.${row}.${field}`;
  }
  if (head === 'instruments' && typeof second === 'string') {
    const row = read.keyOfInstrument.indexOf(second);
    if (row < 0) return '';
    return third === 'temperatureC' ? `instruments.${row}.temperatureC` : `instruments.${row}.figure`;
  }
  if (head === 'constants' && typeof second === 'string') {
    const row = values.constants.findIndex((c) => c.name.trim() === second);
    return row < 0 ? '' : `constants.${row}.${third === 'unit' ? 'unit' : 'value'}`;
  }
  if (head === 'formula') return 'formula';
  if (head === 'resultUnit') return 'resultUnit';
  if (head === 'spec') {
    if (second === 'preferred') return third === 'max' ? 'spec.preferredMax' : 'spec.preferredMin';
    return typeof second === 'string' && ['min', 'max', 'unit', 'rule', 'reject'].includes(second) ? `spec.${second}` : 'spec.min';
  }
  if (head === 'coverageFactor') return 'coverage.factor';
  if (head === 'coverageProbability') return 'coverage.probability';
  return '';
}

/** Where an issue is, in words, for the list beside the result. */
export function describeField(field: string, values: CalcFormValues): string {
  const reading = /^readings\.(\d+)\.(\w+)$/.exec(field);
  if (reading) {
    const row = values.readings[Number(reading[1])];
    return `Reading ${Number(reading[1]) + 1}${row?.name ? ` (${row.name})` : ''}, ${reading[2]}`;
  }
  const instrument = /^instruments\.(\d+)\.(\w+)$/.exec(field);
  if (instrument) {
    const row = values.instruments[Number(instrument[1])];
    return `Instrument ${Number(instrument[1]) + 1}${row?.name ? ` (${row.name})` : ''}`;
  }
  const constant = /^constants\.(\d+)\.(\w+)$/.exec(field);
  if (constant) return `Constant ${values.constants[Number(constant[1])]?.name ?? Number(constant[1]) + 1}`;
  if (field === 'formula') return 'Formula';
  if (field === 'resultUnit') return 'Result unit';
  if (field.startsWith('spec.')) return `Spec, ${field.slice(5)}`;
  if (field.startsWith('coverage.')) return 'Coverage';
  return values.model === 'sum' ? 'The sum' : 'The model';
}

/** The result of checking the form: a valid request, or the problems by field. */
export type CheckedForm =
  | { ok: true; request: CalcRequest; read: ReadForm }
  | { ok: false; issues: FormIssue[]; read: ReadForm };

/** Reads the form and validates it with the same schema the server uses (the engine's own checks come later, in the worker). */
export function checkForm(values: CalcFormValues): CheckedForm {
  const read = readForm(values);
  if (read.issues.length > 0) return { ok: false, issues: read.issues, read };
  const parsed = calcRequestSchema.safeParse(read.request);
  if (parsed.success) return { ok: true, request: parsed.data, read };
  return {
    ok: false,
    read,
    issues: parsed.error.issues.map((issue) => {
      const field = fieldOfIssue(issue.path, read, values);
      // The schema names its range in °C; a box in °F says it in °F.
      const outOfRange = values.temperatureScale === 'degF' && field.endsWith('.temperatureC') && /must be at (least|most) -?\d+ °C$/.test(issue.message);
      return { field, message: outOfRange ? `Enter a temperature from ${fahrenheit(TEMPERATURE_RANGE_C.min)} to ${fahrenheit(TEMPERATURE_RANGE_C.max)} °F.` : issue.message };
    }),
  };
}

/** A °C limit in whole °F, for messages (−50 °C = −58 °F, 150 °C = 302 °F). */
function fahrenheit(celsius: number): number {
  return Math.round(convertNumber(celsius, 'degC', 'degF'));
}

/** react-hook-form resolver built on `checkForm`: field errors where they belong, the rest at the root. */
export const calcFormResolver: Resolver<CalcFormValues> = (values) => {
  const checked = checkForm(values);
  if (checked.ok) return { values, errors: {} };
  const errors: Record<string, unknown> = {};
  for (const issue of checked.issues) {
    const path = issue.field === '' ? ['root'] : issue.field.split('.');
    let node = errors;
    path.forEach((segment, index) => {
      if (index === path.length - 1) {
        if (!node[segment]) node[segment] = { type: 'validate', message: issue.message };
      } else {
        node[segment] ??= /^\d+$/.test(path[index + 1] ?? '') ? [] : {};
        node = node[segment] as Record<string, unknown>;
      }
    });
  }
  return { values: {}, errors: errors as FieldErrors<CalcFormValues> };
};
