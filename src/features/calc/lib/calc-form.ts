import type { FieldErrors, Resolver } from 'react-hook-form';
import { calcRequestSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { decimalToText } from '@shared/measure/decimal';
import { parseLength, type EnteredLength } from '@shared/measure/parse';
import type { DecisionRule } from '@shared/measure/spec';
import { lookupMaterial } from '@shared/measure/thermal';
import { type LengthUnit, maxExactDecimals, picometresPerUnit, unitNames } from '@shared/measure/units';

/** How a reading takes part in the clearance. */
export type TermSign = 'plus' | 'minus' | 'none';

/** One reading row as typed. Lengths are text so "0.5640" keeps its places. */
export interface ReadingRow {
  name: string;
  kind: 'direct' | 'bracket' | 'repeated';
  unit: LengthUnit;
  sign: TermSign;
  value: string;
  resolution: string;
  uncertainty: string;
  zeroOffset: string;
  temperatureC: string;
  /** A material key, "custom" (use expansionPerK) or "" (no correction). */
  material: string;
  expansionPerK: string;
  passes: string;
  stops: string;
  values: string;
}

/** The whole calculator form. */
export interface CalcFormValues {
  readings: ReadingRow[];
  spec: {
    enabled: boolean;
    unit: LengthUnit;
    min: string;
    max: string;
    rule: DecisionRule;
    /** Drawn and judged in the page only; the API spec has no preferred band or reject limit. */
    preferredMin: string;
    preferredMax: string;
    reject: string;
    source: string;
  };
  coverageFactor: string;
  /** Name of a reading to state the clearance per inch / per 25 mm of, or "". */
  diameter: string;
}

/** An empty reading row. */
export function blankReading(n: number, unit: LengthUnit = 'in'): ReadingRow {
  return {
    name: `reading ${n}`,
    kind: 'direct',
    unit,
    sign: 'plus',
    value: '',
    resolution: '',
    uncertainty: '',
    zeroOffset: '',
    temperatureC: '',
    material: '',
    expansionPerK: '',
    passes: '',
    stops: '',
    values: '',
  };
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

/** Worked examples. Figures are common workshop practice (no published source), for trying the page. */
export const examples: { id: string; title: string; values: CalcFormValues }[] = [
  {
    id: 'end-float',
    title: 'End float: bore depth − component height',
    values: {
      readings: [
        { ...blankReading(1), name: 'bore depth', value: '0.5642', resolution: '0.0001' },
        { ...blankReading(2), name: 'component height', sign: 'minus', value: '0.5595', resolution: '0.0001' },
      ],
      spec: { ...blankSpec, enabled: true, min: '0.003', max: '0.005', source: 'Example figures (common practice, no published source)' },
      coverageFactor: '2',
      diameter: '',
    },
  },
  {
    id: 'oil-pump',
    title: 'Oil pump: outer rotor to body, feeler blades',
    values: {
      readings: [{ ...blankReading(1), name: 'rotor to body', kind: 'bracket', passes: '0.004', stops: '0.005' }],
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
      coverageFactor: '2',
      diameter: '',
    },
  },
  {
    id: 'rotor-tip',
    title: 'Rotor tip gap, one-sided maximum',
    values: {
      readings: [{ ...blankReading(1), name: 'tip gap', kind: 'bracket', passes: '0.004', stops: '0.005' }],
      spec: { ...blankSpec, enabled: true, max: '0.006', source: 'Example figure: 0.006 in max (common practice, no published source)' },
      coverageFactor: '2',
      diameter: '',
    },
  },
];

/** What the page starts with. */
export const initialValues: CalcFormValues = examples[0]!.values;

/** A problem tied to a form field path (react-hook-form dot path) or to the form as a whole (""). */
export interface FormIssue {
  field: string;
  message: string;
}

/** The form read into an API request (unvalidated), the row index of each key, and text problems. */
export interface ReadForm {
  request: unknown;
  keyOfRow: string[];
  issues: FormIssue[];
  /** Parsed spec extras in the spec's unit, picometres (page-only). */
  extras: { preferredMinPm?: bigint; preferredMaxPm?: bigint; rejectPm?: bigint; minPm?: bigint; maxPm?: bigint };
}

/** Picometres as a JSON number in `unit`, or null when that unit cannot hold it exactly. */
function pmAsNumberIn(pm: bigint, unit: LengthUnit): number | null {
  const places = maxExactDecimals[unit];
  const scaled = pm * 10n ** BigInt(places);
  if (scaled % picometresPerUnit[unit] !== 0n) return null;
  return Number(decimalToText({ coefficient: scaled / picometresPerUnit[unit], scale: places }));
}

/** A reading key from its name: "bore depth" → "bore-depth". */
export function keyFromName(name: string, index: number): string {
  const slug = name
    .trim()
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40);
  return /^[a-z]/.test(slug) ? slug : `r${index + 1}${slug ? `-${slug}` : ''}`.slice(0, 40);
}

/**
 * Reads the typed form into the API's request shape. Each length box accepts a bare number (in
 * the row's unit) or a number with its own unit, converted exactly; resolution left blank is sent
 * as one step of the value's last typed digit, so "0.5640" means 0.0001.
 */
export function readForm(values: CalcFormValues): ReadForm {
  const issues: FormIssue[] = [];
  const keyOfRow: string[] = [];
  const readings: Record<string, unknown> = {};
  const terms: { reading: string; sign: 1 | -1 }[] = [];
  const seen = new Map<string, number>();

  const length = (field: string, text: string, unit: LengthUnit, required: boolean): EnteredLength | undefined => {
    if (text.trim() === '') {
      if (required) issues.push({ field, message: 'Enter a number.' });
      return undefined;
    }
    const parsed = parseLength(text, { defaultUnit: unit });
    if (!parsed.ok) {
      issues.push({ field, message: parsed.message });
      return undefined;
    }
    return parsed.length;
  };
  const inUnit = (field: string, entered: EnteredLength | undefined, unit: LengthUnit): number | undefined => {
    if (!entered) return undefined;
    const n = pmAsNumberIn(entered.pm, unit);
    if (n === null) {
      issues.push({ field, message: `This cannot be held exactly in ${unitNames[unit]}; enter it in ${unitNames[unit]}.` });
      return undefined;
    }
    return n;
  };
  const plain = (field: string, text: string, what: string): number | undefined => {
    if (text.trim() === '') return undefined;
    const n = Number(text.trim().replace(/^−/, '-'));
    if (!Number.isFinite(n) || !/^[+-−]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(text.trim())) {
      issues.push({ field, message: `Enter ${what} as a number.` });
      return undefined;
    }
    return n;
  };

  values.readings.forEach((row, i) => {
    const at = (name: string) => `readings.${i}.${name}`;
    const key = keyFromName(row.name, i);
    keyOfRow.push(key);
    if (seen.has(key)) issues.push({ field: at('name'), message: `Another reading is already called "${row.name.trim()}"; give each a different name.` });
    seen.set(key, i);
    const u = row.unit;
    if (row.kind === 'direct') {
      const value = length(at('value'), row.value, u, true);
      const resolution = length(at('resolution'), row.resolution, u, false);
      const reading: Record<string, unknown> = { kind: 'direct', unit: u, value: inUnit(at('value'), value, u) };
      const res = resolution ? inUnit(at('resolution'), resolution, u) : value ? pmAsNumberIn(value.lastPlacePm, u) ?? undefined : undefined;
      if (res !== undefined) reading.resolution = res;
      const uncertainty = inUnit(at('uncertainty'), length(at('uncertainty'), row.uncertainty, u, false), u);
      if (uncertainty !== undefined) reading.uncertainty = uncertainty;
      const zero = inUnit(at('zeroOffset'), length(at('zeroOffset'), row.zeroOffset, u, false), u);
      if (zero !== undefined) reading.zeroOffset = zero;
      const t = plain(at('temperatureC'), row.temperatureC, 'the temperature in °C');
      if (t !== undefined) {
        reading.temperatureC = t;
        if (row.material === 'custom') {
          const alpha = plain(at('expansionPerK'), row.expansionPerK, 'the coefficient per K (e.g. 11.7e-6)');
          if (alpha !== undefined) reading.expansionPerK = alpha;
          else issues.push({ field: at('expansionPerK'), message: 'Enter the coefficient per K, e.g. 11.7e-6.' });
        } else if (row.material && lookupMaterial(row.material)) {
          reading.material = row.material;
        } else {
          issues.push({ field: at('material'), message: 'Choose the part’s material to correct to 20 °C, or clear the temperature.' });
        }
      }
      readings[key] = reading;
    } else if (row.kind === 'bracket') {
      readings[key] = {
        kind: 'bracket',
        unit: u,
        passes: inUnit(at('passes'), length(at('passes'), row.passes, u, true), u),
        stops: inUnit(at('stops'), length(at('stops'), row.stops, u, true), u),
      };
    } else {
      const text = row.values.trim();
      if (/\d,\d/.test(text)) issues.push({ field: at('values'), message: 'Separate values with spaces or new lines, and use a decimal point.' });
      const parts = text.split(/[\s;]+/).filter(Boolean);
      if (parts.length < 2) issues.push({ field: at('values'), message: 'Enter at least two values, separated by spaces or new lines.' });
      const entered = parts.map((part) => length(at('values'), part, u, true));
      const numbers = entered.map((e) => inUnit(at('values'), e, u));
      const reading: Record<string, unknown> = { kind: 'repeated', unit: u, values: numbers };
      const resolution = length(at('resolution'), row.resolution, u, false);
      const finest = entered.reduce<bigint | undefined>((acc, e) => (e && (acc === undefined || e.lastPlacePm < acc) ? e.lastPlacePm : acc), undefined);
      const res = resolution ? inUnit(at('resolution'), resolution, u) : finest !== undefined ? pmAsNumberIn(finest, u) ?? undefined : undefined;
      if (res !== undefined) reading.resolution = res;
      readings[key] = reading;
    }
    if (row.sign !== 'none') terms.push({ reading: key, sign: row.sign === 'plus' ? 1 : -1 });
  });

  if (values.readings.length > 0 && terms.length === 0) {
    issues.push({ field: '', message: 'Choose + or − for at least one reading to build a clearance.' });
  }

  const request: Record<string, unknown> = { readings, terms };
  const extras: ReadForm['extras'] = {};
  if (values.spec.enabled) {
    const su = values.spec.unit;
    const min = length('spec.min', values.spec.min, su, false);
    const max = length('spec.max', values.spec.max, su, false);
    if (!min && !max && !issues.some((i) => i.field.startsWith('spec.'))) {
      issues.push({ field: 'spec.min', message: 'Enter a min, a max or both, or switch the spec off.' });
    }
    const spec: Record<string, unknown> = { unit: su, rule: values.spec.rule };
    const minN = inUnit('spec.min', min, su);
    const maxN = inUnit('spec.max', max, su);
    if (minN !== undefined) spec.min = minN;
    if (maxN !== undefined) spec.max = maxN;
    request.spec = spec;
    extras.minPm = min?.pm;
    extras.maxPm = max?.pm;
    extras.preferredMinPm = length('spec.preferredMin', values.spec.preferredMin, su, false)?.pm;
    extras.preferredMaxPm = length('spec.preferredMax', values.spec.preferredMax, su, false)?.pm;
    extras.rejectPm = length('spec.reject', values.spec.reject, su, false)?.pm;
    const lo = extras.minPm;
    const hi = extras.maxPm;
    const pLo = extras.preferredMinPm ?? lo;
    const pHi = extras.preferredMaxPm ?? hi;
    if ((extras.preferredMinPm !== undefined || extras.preferredMaxPm !== undefined) &&
      ((lo !== undefined && pLo !== undefined && pLo < lo) || (hi !== undefined && pHi !== undefined && pHi > hi) || (pLo !== undefined && pHi !== undefined && pLo > pHi))) {
      issues.push({ field: 'spec.preferredMin', message: 'The preferred band must lie inside the spec limits.' });
    }
    if (extras.rejectPm !== undefined && !((hi !== undefined && extras.rejectPm >= hi) || (lo !== undefined && extras.rejectPm <= lo))) {
      issues.push({ field: 'spec.reject', message: 'A reject limit lies outside the band: at or above max, or at or below min.' });
    }
  }
  const k = plain('coverageFactor', values.coverageFactor, 'the coverage factor');
  if (k !== undefined) request.coverageFactor = k;
  return { request, keyOfRow, issues, extras };
}

/** Maps an API schema issue path back to the form field it came from. */
function fieldOfIssue(path: PropertyKey[], keyOfRow: string[]): string {
  const [head, second, third] = path;
  if (head === 'readings' && typeof second === 'string') {
    const row = keyOfRow.indexOf(second);
    if (row < 0) return '';
    const field = typeof third === 'string' ? third : 'value';
    const known = ['value', 'resolution', 'uncertainty', 'zeroOffset', 'temperatureC', 'expansionPerK', 'material', 'passes', 'stops', 'values', 'unit'];
    return `readings.${row}.${known.includes(field) ? field : 'value'}`;
  }
  if (head === 'terms' && typeof second === 'number') {
    return '';
  }
  if (head === 'spec') return typeof second === 'string' && ['min', 'max', 'unit', 'rule'].includes(second) ? `spec.${second}` : 'spec.min';
  if (head === 'coverageFactor') return 'coverageFactor';
  return '';
}

/** The result of checking the form: a valid request, or the problems by field. */
export type CheckedForm =
  | { ok: true; request: CalcRequest; read: ReadForm }
  | { ok: false; issues: FormIssue[]; read: ReadForm };

/** Reads the form and validates it with the same schema the server uses. */
export function checkForm(values: CalcFormValues): CheckedForm {
  const read = readForm(values);
  if (read.issues.length > 0) return { ok: false, issues: read.issues, read };
  const parsed = calcRequestSchema.safeParse(read.request);
  if (parsed.success) return { ok: true, request: parsed.data, read };
  return {
    ok: false,
    read,
    issues: parsed.error.issues.map((issue) => ({ field: fieldOfIssue(issue.path, read.keyOfRow), message: issue.message })),
  };
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
