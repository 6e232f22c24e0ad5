import type { FieldErrors, Resolver } from 'react-hook-form';
import { clearanceInputSchema, type Clearance, type ClearanceInput, type ClearanceTemplateId } from '@shared/clearances/clearance.schema';
import type { ClearanceTermInput, ResultFormula } from '@shared/clearances/clearance-calc';
import { clearanceTemplates, type ClearanceTemplate } from '@shared/clearances/templates';
import { withUnit } from '@shared/measure/format-quantity';
import { compileFormula, type FormulaProblem } from '@shared/measure/formula';
import { formulaTemplate, type FormulaTemplate } from '@shared/measure/formula-templates';
import { defaultUnitFor, dimensionOf, isAnyUnit, quantityOf, quantityOfDimension, unitTable, type AnyUnit, type QuantityKind } from '@shared/measure/quantities';
import { parseFigureText } from '@shared/measure/quantity-text';
import { suggestKey, type Reading } from '@shared/readings/reading.schema';
import type { SpecVersion } from '@shared/specs/spec-library.schema';

/** The `template` value of a formula the builder writes by hand (no template; sent as null). */
export const OWN_FORMULA = 'formula';

/** How a result is made: a signed sum of readings, a formula template, or a formula written by hand. */
export type ResultMode = 'sum' | 'template' | 'formula';

/** One term as the form holds it: the reading's id ('' = not picked yet), its sign in a sum, its name in a formula. */
export interface TermRow {
  readingId: string;
  sign: '1' | '-1';
  /** The name a formula uses for the reading ('' in a sum): a template's slot key, or one the builder gives. */
  symbol: string;
}

/** A named constant of a formula as typed: "3.990 in", "180°". */
export interface ConstantRow {
  name: string;
  value: string;
}

/** The result form as typed. */
export interface ClearanceFormValues {
  /** A signed-sum template id, a formula template id, or `OWN_FORMULA`. */
  template: ClearanceTemplateId;
  terms: TermRow[];
  /** The formula written by hand (`OWN_FORMULA` only; a template brings its own). */
  formula: string;
  /** A template's constants the builder supplies (a target size), or the hand-written formula's. */
  constants: ConstantRow[];
  /** '' = the spec's unit, else the natural one; otherwise a unit of the result's quantity. */
  resultUnit: '' | AnyUnit;
  name: string;
  /** '' = derived from the name by the server. Follows the name until typed by hand. */
  key: string;
  /** The spec picked in the library ('' = none) and which of its versions. */
  specId: string;
  specVersionId: string;
  /** '' = a 95 % interval worked out by the engine; a number = a chosen k. */
  coverageFactor: string;
  note: string;
}

/** What the form needs to know of a reading. */
export type FormReading = Pick<Reading, 'id' | 'key' | 'name' | 'unit' | 'engine' | 'engineInstrument'>;

/** The signed-sum template with this id, or undefined (a formula template, or the hand-written formula). */
export function sumTemplate(id: string): ClearanceTemplate | undefined {
  return clearanceTemplates.find((t) => t.id === id);
}

/** Which way a result with this `template` value is made. */
export function modeOf(template: string): ResultMode {
  if (template === OWN_FORMULA) return 'formula';
  if (formulaTemplate(template)) return 'template';
  return 'sum';
}

/** What a reading measures, from its unit. */
export function quantityOfReading(reading: Pick<Reading, 'unit'>): QuantityKind {
  return quantityOf(reading.unit);
}

/**
 * Rows for a template's slots, keeping readings already picked: in a sum by position, in a
 * formula template by slot name. A hand-written formula keeps every picked reading, each under
 * the name it had, else its key (`keyOf`).
 */
export function termsForTemplate(id: ClearanceTemplateId, current: readonly TermRow[], keyOf: (readingId: string) => string | undefined = () => undefined): TermRow[] {
  const mode = modeOf(id);
  if (mode === 'template') {
    const template = formulaTemplate(id)!;
    return template.slots.map((slot) => ({ readingId: current.find((t) => t.symbol === slot.key)?.readingId ?? '', sign: '1', symbol: slot.key }));
  }
  if (mode === 'formula') {
    const picked = current.filter((t) => t.readingId);
    const rows = picked.map((t) => ({ readingId: t.readingId, sign: '1' as const, symbol: t.symbol || keyOf(t.readingId) || '' }));
    return rows.length > 0 ? rows : [{ readingId: '', sign: '1', symbol: '' }];
  }
  const template = sumTemplate(id) ?? sumTemplate('custom')!;
  if (template.slots.length === 0) {
    return current.length > 0 ? current.map((t) => ({ ...t, symbol: '' })) : [{ readingId: '', sign: '1', symbol: '' }, { readingId: '', sign: '-1', symbol: '' }];
  }
  return template.slots.map((slot, i) => ({ readingId: current[i]?.readingId ?? '', sign: slot.sign === 1 ? '1' : '-1', symbol: '' }));
}

/** Constant rows for a template: the ones its builder supplies (fixed ones are not typed), keeping what was typed by name. */
export function constantsForTemplate(id: ClearanceTemplateId, current: readonly ConstantRow[]): ConstantRow[] {
  const mode = modeOf(id);
  if (mode === 'template') {
    return formulaTemplate(id)!
      .constants.filter((c) => !c.fixed)
      .map((c) => ({ name: c.key, value: current.find((r) => r.name === c.key)?.value ?? '' }));
  }
  if (mode === 'formula') return current.map((r) => ({ ...r }));
  return [];
}

/**
 * The key a clearance's name suggests, free among the build's other clearance keys: "Outer rotor
 * to body" → "outer-rotor-to-body", then "outer-rotor-to-body-2" for the next one so named.
 */
export function clearanceKeyFor(name: string, takenKeys: Iterable<string>): string {
  return suggestKey(name, takenKeys, 'Clearance');
}

/**
 * The name a template suggests for its readings: a template of one reading (a feeler gap, valve
 * lash) takes that reading's name ("Outer rotor to body"), since the result is that reading; the
 * others their own words ("End float", "Static compression ratio").
 */
export function suggestedClearanceName(id: ClearanceTemplateId, terms: readonly TermRow[], readings: readonly Pick<Reading, 'id' | 'name'>[]): string {
  const mode = modeOf(id);
  if (mode === 'formula') return 'Result';
  const single = mode === 'template' ? formulaTemplate(id)!.slots.length === 1 : (sumTemplate(id)?.slots.length ?? 0) === 1;
  if (single) {
    const picked = readings.find((r) => String(r.id) === terms[0]?.readingId);
    if (picked) return picked.name;
  }
  return mode === 'template' ? formulaTemplate(id)!.name : (sumTemplate(id) ?? sumTemplate('custom')!).suggestedName;
}

/** A new clearance from the end-float template, its 95 % interval worked out by the engine; its key free among `takenKeys`. */
export function blankClearanceForm(takenKeys: Iterable<string> = []): ClearanceFormValues {
  const template = sumTemplate('end-float')!;
  return {
    template: template.id,
    terms: termsForTemplate(template.id, []),
    formula: '',
    constants: [],
    resultUnit: '',
    name: template.suggestedName,
    key: clearanceKeyFor(template.suggestedName, takenKeys),
    specId: '',
    specVersionId: '',
    coverageFactor: '',
    note: '',
  };
}

/** A stored constant as the builder would type it: "3.990 in", "180°", "2" (a pure number). */
export function constantText(constant: { value: string | number; unit: AnyUnit }): string {
  return withUnit(String(constant.value), constant.unit);
}

/** Does a stored formula result still match its template (formula, slots and constants as the template has them)? */
function fitsTemplate(clearance: Clearance, template: FormulaTemplate): boolean {
  if (clearance.formula !== template.formula) return false;
  const symbols = clearance.terms.map((t) => t.symbol);
  if (symbols.length !== template.slots.length || !template.slots.every((s) => symbols.includes(s.key))) return false;
  const names = Object.keys(clearance.constants);
  return names.length === template.constants.length && template.constants.every((c) => names.includes(c.key));
}

/** The form for editing a stored result; a template whose slots no longer fit becomes custom (a sum) or a hand-written formula. */
export function clearanceFormOf(clearance: Clearance): ClearanceFormValues {
  const common = {
    name: clearance.name,
    key: clearance.key,
    specId: clearance.spec ? String(clearance.spec.specId) : '',
    specVersionId: clearance.specVersionId === null ? '' : String(clearance.specVersionId),
    coverageFactor: clearance.coverageFactor === null ? '' : String(clearance.coverageFactor),
    note: clearance.note,
    resultUnit: clearance.resultUnit ?? ('' as const),
  };
  if (clearance.formula !== null) {
    const template = clearance.template ? formulaTemplate(clearance.template) : undefined;
    if (template && fitsTemplate(clearance, template)) {
      return {
        ...common,
        template: template.id,
        terms: template.slots.map((slot) => ({ readingId: String(clearance.terms.find((t) => t.symbol === slot.key)!.readingId), sign: '1', symbol: slot.key })),
        formula: '',
        constants: template.constants.filter((c) => !c.fixed).map((c) => ({ name: c.key, value: constantText(clearance.constants[c.key]!) })),
      };
    }
    return {
      ...common,
      template: OWN_FORMULA,
      terms: clearance.terms.map((t) => ({ readingId: String(t.readingId), sign: '1', symbol: t.symbol ?? t.readingKey })),
      formula: clearance.formula,
      constants: Object.entries(clearance.constants).map(([name, c]) => ({ name, value: constantText(c) })),
    };
  }
  const terms = clearance.terms.map((t) => ({ readingId: String(t.readingId), sign: t.sign === 1 ? '1' : '-1', symbol: '' }) as TermRow);
  const stored = sumTemplate(clearance.template ?? 'custom') ?? sumTemplate('custom')!;
  const slots = stored.slots;
  const fits = slots.length === 0 || (slots.length === terms.length && slots.every((s, i) => String(s.sign) === terms[i]!.sign));
  return { ...common, template: fits ? stored.id : 'custom', terms, formula: '', constants: [] };
}

/** A problem of the form's own, at the form's field path. */
export interface FormIssue {
  path: string;
  message: string;
}

/**
 * The result the form describes, as the engine and the API read it: the terms under the names
 * the model uses (the reading's key in a sum, its name in a formula, as the server does), the
 * formula with its constants, and what can be told already of the result's quantity.
 */
export interface ResultModel {
  mode: ResultMode;
  terms: ClearanceTermInput[];
  formula: ResultFormula | null;
  /** What the result measures, once it can be told (readings picked, a formula that reads). */
  quantity: QuantityKind | null;
  /** Every slot has its reading (a template), the formula is written (by hand). */
  complete: boolean;
  /** Constants that do not read, a formula the engine refuses (in its words), at their fields. */
  issues: FormIssue[];
  /** Readings picked for a hand-written formula that it does not use. */
  unused: string[];
}

/** Reads a constant: a template's has its quantity, and a number alone takes the unit of a reading of that quantity. */
function readConstant(text: string, quantity: QuantityKind | null, readingUnits: readonly AnyUnit[]): { ok: true; value: string; unit: AnyUnit } | { ok: false; message: string } {
  const defaultUnit = quantity ? readingUnits.find((u) => quantityOf(u) === quantity) : ('1' as const);
  const parsed = parseFigureText(text, { ...(quantity && { quantity }), ...(defaultUnit && { defaultUnit }) });
  return parsed.ok ? { ok: true, value: parsed.figure.text, unit: parsed.figure.unit } : parsed;
}

/** The model of the form's values over the build's readings (by id as text). */
export function resultModel(values: Pick<ClearanceFormValues, 'template' | 'terms' | 'formula' | 'constants'>, readings: ReadonlyMap<string, FormReading>): ResultModel {
  const mode = modeOf(values.template);
  const issues: FormIssue[] = [];
  const picked = values.terms.flatMap((t, index) => {
    const r = readings.get(t.readingId);
    return r ? [{ row: t, index, reading: r }] : [];
  });
  if (mode === 'sum') {
    const first = picked[0];
    return {
      mode,
      terms: picked.map(({ row, reading }) => ({ key: reading.key, engine: reading.engine, sign: row.sign === '1' ? 1 : -1 })),
      formula: null,
      quantity: first ? quantityOfReading(first.reading) : null,
      complete: picked.length === values.terms.length,
      issues,
      unused: [],
    };
  }

  const template = mode === 'template' ? formulaTemplate(values.template)! : null;
  const readingUnits = picked.map(({ reading }) => reading.unit);
  const constants: ResultFormula['constants'] = {};
  for (const c of template?.constants ?? []) if (c.fixed) constants[c.key] = { value: c.fixed.value, unit: c.fixed.unit };
  values.constants.forEach((row, index) => {
    const name = row.name.trim();
    const quantity = template ? (template.constants.find((c) => c.key === name)?.quantity ?? null) : null;
    if (!template && !name && !row.value.trim()) return;
    if (!template && !name) {
      issues.push({ path: `constants.${index}.name`, message: 'name the constant as the formula uses it' });
      return;
    }
    if (!row.value.trim()) {
      issues.push({ path: `constants.${index}.value`, message: template ? `enter the ${template.constants.find((c) => c.key === name)?.label.toLowerCase() ?? name}` : 'enter the constant’s value and unit' });
      return;
    }
    const read = readConstant(row.value, quantity, readingUnits);
    if (read.ok) Object.defineProperty(constants, name, { value: { value: read.value, unit: read.unit }, enumerable: true, writable: true, configurable: true });
    else issues.push({ path: `constants.${index}.value`, message: read.message });
  });

  const named = picked.filter(({ row }) => row.symbol.trim() !== '');
  const terms = named.map(({ row, reading }) => ({ key: row.symbol.trim(), engine: reading.engine, sign: 1 as const }));
  const text = template ? template.formula : values.formula.trim();
  let quantity: QuantityKind | null = template ? template.result : null;
  let unused: string[] = [];
  if (!template && text !== '' && named.length > 0) {
    const compiled = compileFormula(text, [
      ...named.map(({ row, reading }) => ({ name: row.symbol.trim(), dimension: dimensionOf(reading.unit) })),
      ...Object.entries(constants).map(([name, c]) => ({ name, dimension: dimensionOf(c.unit) })),
    ]);
    if (compiled.ok) {
      quantity = quantityOfDimension(compiled.formula.dimension);
      unused = compiled.formula.unused.filter((n) => named.some(({ row }) => row.symbol.trim() === n));
    } else {
      issues.push(...formulaIssues(compiled.problems));
    }
  }
  return {
    mode,
    terms,
    formula: text === '' ? null : { text, constants },
    quantity,
    complete: picked.length === values.terms.length && named.length === picked.length && text !== '',
    issues,
    unused,
  };
}

function formulaIssues(problems: readonly FormulaProblem[]): FormIssue[] {
  return problems.map((p) => ({ path: 'formula', message: p.message }));
}

/**
 * The unit the engine states a result in when none is chosen: the spec's, when it is of the
 * result's quantity; else the natural one (the first reading or constant of that quantity, else
 * the metric unit: a ratio has none, volumes are cc). As `evaluateCalc` chooses it.
 */
export function automaticResultUnit(quantity: QuantityKind, specUnit: AnyUnit | null, inputUnits: readonly AnyUnit[]): AnyUnit {
  if (specUnit && quantityOf(specUnit) === quantity) return specUnit;
  return inputUnits.find((u) => quantityOf(u) === quantity) ?? defaultUnitFor(quantity, 'metric');
}

/** A unit in a picker: "cubic centimetre (cc)", "no unit (a ratio)". */
export function unitChoiceLabel(unit: AnyUnit): string {
  const { name, symbol } = unitTable[unit];
  if (symbol === '') return 'no unit (a ratio)';
  return name.includes(`(${symbol})`) ? name : `${name} (${symbol})`;
}

/** The body of POST /api/builds/:buildId/clearances (and the fields of a PATCH). */
export function toClearanceInput(values: ClearanceFormValues, readings: ReadonlyMap<string, FormReading> = new Map()): ClearanceInput {
  const k = values.coverageFactor.trim().replace(',', '.');
  const mode = modeOf(values.template);
  const model = mode === 'sum' ? null : resultModel(values, readings);
  return {
    ...(values.key.trim() && { key: values.key.trim() }),
    name: values.name,
    template: mode === 'formula' ? null : values.template,
    terms: values.terms.map((t) => ({
      readingId: Number(t.readingId),
      sign: mode === 'sum' && t.sign === '-1' ? -1 : 1,
      ...(mode !== 'sum' && { symbol: t.symbol.trim() }),
    })),
    formula: model ? (model.formula?.text ?? values.formula) : null,
    constants: model?.formula?.constants ?? {},
    resultUnit: values.resultUnit && isAnyUnit(values.resultUnit) ? values.resultUnit : null,
    specVersionId: values.specVersionId ? Number(values.specVersionId) : null,
    // Empty: the engine works out a 95 % interval. Not a number: sent as typed so the schema refuses it by name.
    coverageFactor: (k === '' ? null : !Number.isFinite(Number(k)) ? k : Number(k)) as number | null,
    note: values.note,
  };
}

/**
 * A field path of the API ("terms.1.readingId") as the form names it; the whole list is
 * `terms.root`; a constant ("constants.target.value") is its row.
 */
export function clearanceFormPath(apiPath: string, constants: readonly ConstantRow[] = []): string {
  if (apiPath === 'terms') return 'terms.root';
  if (/^terms\.\d+\.symbol$/.test(apiPath)) return apiPath;
  if (apiPath.startsWith('terms.') && !apiPath.endsWith('.readingId') && !apiPath.endsWith('.sign')) return `${apiPath.split('.').slice(0, 2).join('.')}.readingId`;
  if (apiPath === 'specVersionId') return 'specId';
  if (apiPath === 'constants') return 'formula';
  if (apiPath.startsWith('constants.')) {
    const name = apiPath.split('.')[1] ?? '';
    const row = constants.findIndex((c) => c.name.trim() === name);
    return row >= 0 ? `constants.${row}.value` : 'formula';
  }
  return apiPath;
}

/** What the resolver reads besides the values: the build's readings by id. */
export interface ClearanceFormContext {
  readings: ReadonlyMap<string, FormReading>;
}

/** react-hook-form resolver: an unpicked slot named by its label, the form's own model, then the server's own schema. */
export const clearanceFormResolver: Resolver<ClearanceFormValues, ClearanceFormContext> = (values, context) => {
  const readings = context?.readings ?? new Map<string, FormReading>();
  const issues: FormIssue[] = [];
  const mode = modeOf(values.template);
  const slotLabels = mode === 'template' ? formulaTemplate(values.template)!.slots.map((s) => s.label) : (sumTemplate(values.template)?.slots.map((s) => s.label) ?? []);
  values.terms.forEach((t, i) => {
    const label = slotLabels[i];
    if (!t.readingId) issues.push({ path: `terms.${i}.readingId`, message: label ? `pick the ${label.toLowerCase()} reading` : 'pick a reading or remove this term' });
    if (mode === 'formula' && t.readingId && !t.symbol.trim()) issues.push({ path: `terms.${i}.symbol`, message: 'name this reading as the formula uses it' });
  });
  if (mode === 'formula' && !values.formula.trim()) issues.push({ path: 'formula', message: 'write the formula over the readings’ names' });
  if (mode !== 'sum') {
    const model = resultModel(values, readings);
    for (const issue of model.issues) if (!issues.some((i) => i.path === issue.path)) issues.push(issue);
  }
  if (values.specId && !values.specVersionId) issues.push({ path: 'specId', message: 'choose a version of the spec' });
  const parsed = clearanceInputSchema.safeParse(toClearanceInput(values, readings));
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const path = clearanceFormPath(issue.path.map(String).join('.'), values.constants);
      if (!issues.some((i) => i.path === path)) issues.push({ path, message: issue.message });
    }
  }
  if (issues.length === 0) return { values, errors: {} };
  const errors: Record<string, unknown> = {};
  for (const issue of issues) {
    const path = issue.path.split('.');
    let node = errors;
    path.forEach((segment, index) => {
      if (index === path.length - 1) node[segment] ??= { type: 'validate', message: issue.message };
      else {
        node[segment] ??= /^\d+$/.test(path[index + 1] ?? '') ? [] : {};
        node = node[segment] as Record<string, unknown>;
      }
    });
  }
  return { values: {}, errors: errors as FieldErrors<ClearanceFormValues> };
};

/** A spec version's figures in a line: "0.002–0.004 in · preferred 0.0025–0.0035 · reject at or above 0.005"; a ratio has no unit: "9.8–10.6". */
export function versionSummary(v: Pick<SpecVersion, 'unit' | 'min' | 'max' | 'preferredMin' | 'preferredMax' | 'reject' | 'rule'>): string {
  const range = (min: string | null, max: string | null) =>
    min !== null && max !== null ? `${min}–${max}` : min !== null ? `at least ${min}` : max !== null ? `at most ${max}` : '';
  const parts = [withUnit(range(v.min, v.max), v.unit)];
  if (v.preferredMin !== null || v.preferredMax !== null) parts.push(`preferred ${range(v.preferredMin, v.preferredMax)}`);
  if (v.reject !== null) parts.push(`reject ${v.max !== null && Number(v.reject) >= Number(v.max) ? 'at or above' : 'at or below'} ${v.reject}`);
  parts.push(`${v.rule} rule`);
  return parts.join(' · ');
}
