import { formatUncertainty } from '@shared/measure/format';
import { parseLength } from '@shared/measure/parse';
import { unitSymbols } from '@shared/measure/units';
import type { Reading, ReadingKind } from '@shared/readings/reading.schema';

/** Our words for the kinds of reading. */
export const readingKindWords: Record<ReadingKind, string> = {
  direct: 'direct',
  bracket: 'feeler bracket',
  repeated: 'repeated',
};

/** A text as typed, with the reading's unit after it when none was typed (so "0.5642" reads "0.5642 in"). */
function withUnit(text: string, reading: Reading): string {
  return parseLength(text).ok ? text : `${text} ${unitSymbols[reading.unit]}`;
}

function enteredText(reading: Reading, field: string, stored: string | null): string {
  const value = reading.entered[field];
  return withUnit(typeof value === 'string' ? value : (stored ?? ''), reading);
}

/** The figures as they were typed: "0.5642 in", "0.003 in enters · 0.004 in does not", "0.5642 in, 0.5643 in". */
export function enteredFigures(reading: Reading): string {
  if (reading.kind === 'direct') return enteredText(reading, 'value', reading.value);
  if (reading.kind === 'bracket') {
    return `${enteredText(reading, 'passes', reading.passes)} enters · ${enteredText(reading, 'stops', reading.stops)} does not`;
  }
  const typed = reading.entered.values;
  const list = Array.isArray(typed) ? typed : (reading.values ?? []);
  return list.map((v) => withUnit(v, reading)).join(', ');
}

/** The engine's estimate with its standard uncertainty: "0.5642 in ± 0.000029 in". */
export function estimateText(reading: Reading): string {
  return `${reading.result.display} ± ${formatUncertainty(reading.result.standardUncertaintyUm, reading.unit)}`;
}

/** Values typed into one box, separated by semicolons, new lines or a comma and a space. */
export function splitValues(text: string): string[] {
  return text
    .split(/\s*[;\n]\s*|,\s+/)
    .map((v) => v.trim())
    .filter(Boolean);
}
