import type { FieldErrors, Resolver } from 'react-hook-form';
import { clearanceInputSchema, type Clearance, type ClearanceInput, type ClearanceTemplateId } from '@shared/clearances/clearance.schema';
import { clearanceTemplate } from '@shared/clearances/templates';
import { suggestKey, type Reading } from '@shared/readings/reading.schema';
import type { SpecVersion } from '@shared/specs/spec-library.schema';
import { unitSymbols } from '@shared/measure/units';

/** One term as the form holds it: the reading's id ('' = not picked yet) and its sign. */
export interface TermRow {
  readingId: string;
  sign: '1' | '-1';
}

/** The clearance form as typed. */
export interface ClearanceFormValues {
  template: ClearanceTemplateId;
  terms: TermRow[];
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

/** Rows for a template's slots, keeping readings already picked in the same places. */
export function termsForTemplate(id: ClearanceTemplateId, current: readonly TermRow[]): TermRow[] {
  const template = clearanceTemplate(id);
  if (template.slots.length === 0) {
    return current.length > 0 ? current.map((t) => ({ ...t })) : [{ readingId: '', sign: '1' }, { readingId: '', sign: '-1' }];
  }
  return template.slots.map((slot, i) => ({ readingId: current[i]?.readingId ?? '', sign: slot.sign === 1 ? '1' : '-1' }));
}

/**
 * The key a clearance's name suggests, free among the build's other clearance keys: "Outer rotor
 * to body" → "outer-rotor-to-body", then "outer-rotor-to-body-2" for the next one so named.
 */
export function clearanceKeyFor(name: string, takenKeys: Iterable<string>): string {
  return suggestKey(name, takenKeys, 'Clearance');
}

/**
 * The name a template suggests for its readings: a template of one reading (a feeler gap) takes
 * that reading's name ("Outer rotor to body"), since the clearance is that gap; the others their
 * own words ("End float").
 */
export function suggestedClearanceName(id: ClearanceTemplateId, terms: readonly TermRow[], readings: readonly Pick<Reading, 'id' | 'name'>[]): string {
  const template = clearanceTemplate(id);
  if (template.slots.length === 1) {
    const picked = readings.find((r) => String(r.id) === terms[0]?.readingId);
    if (picked) return picked.name;
  }
  return template.suggestedName;
}

/** A new clearance from the end-float template, its 95 % interval worked out by the engine; its key free among `takenKeys`. */
export function blankClearanceForm(takenKeys: Iterable<string> = []): ClearanceFormValues {
  const template = clearanceTemplate('end-float');
  return {
    template: template.id,
    terms: termsForTemplate(template.id, []),
    name: template.suggestedName,
    key: clearanceKeyFor(template.suggestedName, takenKeys),
    specId: '',
    specVersionId: '',
    coverageFactor: '',
    note: '',
  };
}

/** The form for editing a stored clearance; a template whose slots no longer fit becomes custom. */
export function clearanceFormOf(clearance: Clearance): ClearanceFormValues {
  const terms = clearance.terms.map((t) => ({ readingId: String(t.readingId), sign: t.sign === 1 ? '1' : '-1' }) as TermRow);
  const stored = clearance.template ?? 'custom';
  const slots = clearanceTemplate(stored).slots;
  const fits = slots.length === 0 || (slots.length === terms.length && slots.every((s, i) => String(s.sign) === terms[i]!.sign));
  return {
    template: fits ? stored : 'custom',
    terms,
    name: clearance.name,
    key: clearance.key,
    specId: clearance.spec ? String(clearance.spec.specId) : '',
    specVersionId: clearance.specVersionId === null ? '' : String(clearance.specVersionId),
    coverageFactor: clearance.coverageFactor === null ? '' : String(clearance.coverageFactor),
    note: clearance.note,
  };
}

/** The body of POST /api/builds/:buildId/clearances (and the fields of a PATCH). */
export function toClearanceInput(values: ClearanceFormValues): ClearanceInput {
  const k = values.coverageFactor.trim().replace(',', '.');
  return {
    ...(values.key.trim() && { key: values.key.trim() }),
    name: values.name,
    template: values.template,
    terms: values.terms.map((t) => ({ readingId: Number(t.readingId), sign: t.sign === '1' ? 1 : -1 })),
    specVersionId: values.specVersionId ? Number(values.specVersionId) : null,
    // Empty: the engine works out a 95 % interval. Not a number: sent as typed so the schema refuses it by name.
    coverageFactor: (k === '' ? null : !Number.isFinite(Number(k)) ? k : Number(k)) as number | null,
    note: values.note,
  };
}

/** A field path of the API ("terms.1.readingId") as the form names it; the whole list is `terms.root`. */
export function clearanceFormPath(apiPath: string): string {
  if (apiPath === 'terms') return 'terms.root';
  if (apiPath.startsWith('terms.') && !apiPath.endsWith('.readingId') && !apiPath.endsWith('.sign')) return `${apiPath}.readingId`;
  if (apiPath === 'specVersionId') return 'specId';
  return apiPath;
}

/** react-hook-form resolver: an unpicked slot named by its label, then the server's own schema. */
export const clearanceFormResolver: Resolver<ClearanceFormValues> = (values) => {
  const issues: { path: string; message: string }[] = [];
  const slots = clearanceTemplate(values.template).slots;
  values.terms.forEach((t, i) => {
    if (!t.readingId) issues.push({ path: `terms.${i}.readingId`, message: slots[i] ? `pick the ${slots[i].label.toLowerCase()} reading` : 'pick a reading or remove this term' });
  });
  if (values.specId && !values.specVersionId) issues.push({ path: 'specId', message: 'choose a version of the spec' });
  const parsed = clearanceInputSchema.safeParse(toClearanceInput(values));
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const path = clearanceFormPath(issue.path.map(String).join('.'));
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

/** A spec version's figures in a line: "0.002–0.004 in · preferred 0.0025–0.0035 · reject at or above 0.005". */
export function versionSummary(v: Pick<SpecVersion, 'unit' | 'min' | 'max' | 'preferredMin' | 'preferredMax' | 'reject' | 'rule'>): string {
  const u = unitSymbols[v.unit];
  const range = (min: string | null, max: string | null) =>
    min !== null && max !== null ? `${min}–${max}` : min !== null ? `at least ${min}` : max !== null ? `at most ${max}` : '';
  const parts = [`${range(v.min, v.max)} ${u}`];
  if (v.preferredMin !== null || v.preferredMax !== null) parts.push(`preferred ${range(v.preferredMin, v.preferredMax)}`);
  if (v.reject !== null) parts.push(`reject ${v.max !== null && Number(v.reject) >= Number(v.max) ? 'at or above' : 'at or below'} ${v.reject}`);
  parts.push(`${v.rule} rule`);
  return parts.join(' · ');
}
