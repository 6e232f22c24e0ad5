import type { FieldErrors, Resolver } from 'react-hook-form';
import type { Instrument } from '@shared/instruments/instrument.schema';
import { readingInputSchema, type ReadingInput, type ReadingKind } from '@shared/readings/reading.schema';
import { normaliseReadingFigures } from '@shared/readings/reading-figures';

/** The reading form as typed: every length is text, so "0.5640" keeps its places. */
export interface ReadingFormValues {
  name: string;
  /** Instrument id as the select holds it; '' = none chosen yet. */
  instrumentId: string;
  /** Part id; '' = not tied to a part. */
  partId: string;
  kind: ReadingKind;
  value: string;
  passes: string;
  stops: string;
  values: { text: string }[];
  temperatureC: string;
  material: string;
  note: string;
  takenOn: string;
}

/** The day on the bench's own calendar (the form's default "taken on"), YYYY-MM-DD. */
export function localToday(now: Date = new Date()): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/** Feeler blades are read by bracketing; everything else shows one indication. */
export function defaultKindFor(instrument: Pick<Instrument, 'kind'> | undefined): ReadingKind {
  return instrument?.kind === 'feeler-blades' ? 'bracket' : 'direct';
}

/** A fresh form for a reading taken today with `instrument`. */
export function blankReadingForm(instrument: Instrument | undefined, partId: number | null): ReadingFormValues {
  return {
    name: '',
    instrumentId: instrument ? String(instrument.id) : '',
    partId: partId === null ? '' : String(partId),
    kind: defaultKindFor(instrument),
    value: '',
    passes: '',
    stops: '',
    values: [{ text: '' }, { text: '' }, { text: '' }],
    temperatureC: '',
    material: '',
    note: '',
    takenOn: localToday(),
  };
}

/** The figures the chosen kind uses, as the API and `normaliseReadingFigures` take them. */
export function figuresOf(values: Pick<ReadingFormValues, 'kind' | 'value' | 'passes' | 'stops' | 'values'>) {
  if (values.kind === 'direct') return { kind: values.kind, value: values.value } as const;
  if (values.kind === 'bracket') return { kind: values.kind, passes: values.passes, stops: values.stops } as const;
  return { kind: values.kind, values: values.values.map((v) => v.text).filter((t) => t.trim() !== '') } as const;
}

/** A temperature box: '' = none; anything else must be a number (else it is sent as text and refused by name). */
function temperatureOf(text: string): number | null | string {
  const trimmed = text.trim().replace(/^[−–]/, '-');
  if (!trimmed) return null;
  const n = Number(trimmed);
  return Number.isFinite(n) ? n : trimmed;
}

/** The body of POST /api/builds/:buildId/readings for what was typed at `momentId`. */
export function toReadingInput(values: ReadingFormValues, momentId: number): ReadingInput {
  return {
    momentId,
    instrumentId: Number(values.instrumentId),
    partId: values.partId ? Number(values.partId) : null,
    name: values.name,
    ...figuresOf(values),
    // A non-number is passed through so the schema names the field; the type only admits numbers.
    temperatureC: temperatureOf(values.temperatureC) as number | null,
    material: values.material || null,
    note: values.note,
    takenOn: values.takenOn,
  };
}

/**
 * A field path of the API ("values.1") as the form names it ("values.3.text"): empty value
 * boxes are not sent, so the API's index counts only the filled ones.
 */
export function formPathOf(apiPath: string, values?: Pick<ReadingFormValues, 'values'>): string {
  if (apiPath === 'values') return 'values.root';
  const repeated = /^values\.(\d+)/.exec(apiPath);
  if (repeated) {
    const filled = (values?.values ?? []).flatMap((v, i) => (v.text.trim() === '' ? [] : [i]));
    return `values.${filled[Number(repeated[1])] ?? repeated[1]}.text`;
  }
  if (apiPath === 'momentId') return 'root.moment';
  return apiPath;
}

/** An issue on a path of the form; '' = about the whole reading. */
export interface FormIssue {
  path: string;
  message: string;
}

/**
 * Everything wrong with what was typed, by field: the server's own schema first, then the
 * figures against the instrument (unit, sign, bracket order), the same checks the server runs.
 */
export function readingFormIssues(values: ReadingFormValues, instruments: readonly Instrument[]): FormIssue[] {
  const issues: FormIssue[] = [];
  const seen = new Set<string>();
  const add = (path: string, message: string) => {
    if (seen.has(path)) return;
    seen.add(path);
    issues.push({ path, message });
  };
  if (!values.instrumentId) add('instrumentId', 'choose the instrument the reading was taken with');
  // momentId 1 stands in for the moment, which the form checks on its own.
  const parsed = readingInputSchema.safeParse(toReadingInput(values, 1));
  if (!parsed.success) {
    for (const issue of parsed.error.issues) add(formPathOf(issue.path.map(String).join('.'), values) || 'root', issue.message);
  }
  const instrument = instruments.find((i) => String(i.id) === values.instrumentId);
  if (instrument) {
    const figures = normaliseReadingFigures(figuresOf(values), instrument);
    if (!figures.ok) for (const problem of figures.problems) add(formPathOf(problem.path, values), problem.message);
  }
  return issues;
}

/** react-hook-form resolver over `readingFormIssues`; the instruments are read at validation time. */
export function readingFormResolver(instruments: () => readonly Instrument[]): Resolver<ReadingFormValues> {
  return (values) => {
    const issues = readingFormIssues(values, instruments());
    if (issues.length === 0) return { values, errors: {} };
    const errors: Record<string, unknown> = {};
    for (const issue of issues) {
      const path = issue.path.split('.');
      let node = errors;
      path.forEach((segment, index) => {
        if (index === path.length - 1) {
          node[segment] ??= { type: 'validate', message: issue.message };
        } else {
          node[segment] ??= /^\d+$/.test(path[index + 1] ?? '') ? [] : {};
          node = node[segment] as Record<string, unknown>;
        }
      });
    }
    return { values: {}, errors: errors as FieldErrors<ReadingFormValues> };
  };
}
