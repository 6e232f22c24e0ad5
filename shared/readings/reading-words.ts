/**
 * The words the reading form shows, and the refusals built from them. The API keeps its field
 * names (`passes`, `stops`, `values.2`) as the paths of its refusals, so each message lands
 * beside its box; the message itself speaks the form's words and says what to do.
 */
import type { ReadingKind } from './reading.schema';

/** How a reading was taken, as the form's choices name it. */
export const readingKindLabels: Readonly<Record<ReadingKind, string>> = {
  direct: 'One indication',
  bracket: 'Feeler bracket',
  repeated: 'Repeated',
};

type FigureField = 'value' | 'passes' | 'stops' | 'values';

/** Which kind each figure belongs to. */
const kindOfField: Readonly<Record<FigureField, ReadingKind>> = {
  value: 'direct',
  passes: 'bracket',
  stops: 'bracket',
  values: 'repeated',
};

/** A figure as a sentence names it: "the blade that enters". */
const figureWords: Readonly<Record<FigureField, string>> = {
  value: 'the value as shown',
  passes: 'the blade that enters',
  stops: 'the blade that does not enter',
  values: 'the values',
};

/** The engine's and the API's names of what a reading is made of, in the form's words. */
const otherFieldWords: Readonly<Record<string, string>> = {
  resolution: "the instrument's resolution",
  uncertainty: "the instrument's stated uncertainty",
  zeroOffset: "the day's zero offset",
  zeroResolution: "the zero check's resolution",
  temperatureC: 'the temperature',
  material: 'the material',
  instrumentId: 'the instrument',
  partId: 'the part',
  momentId: 'the moment',
  takenOn: 'the day it was taken',
  name: 'the name',
  note: 'the note',
  kind: 'how it was read',
  unit: 'the unit',
};

/**
 * A field path of a reading ("stops", "values.2", "resolution") in the form's words, lower case:
 * "the blade that does not enter", "value 3", "the instrument's resolution".
 */
export function readingFieldWords(path: string): string {
  const [head = '', index] = path.split('.');
  if (head === 'values' && index !== undefined && /^\d+$/.test(index)) return `value ${Number(index) + 1}`;
  return figureWords[head as FigureField] ?? otherFieldWords[head] ?? head;
}

function capitalised(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

/** A feeler bracket whose "does not enter" blade is not thicker than the one that enters; both as typed, with their units. */
export function bracketOrderMessage(enters: string, doesNotEnter: string): string {
  return `The blade that does not enter must be thicker than the one that enters (${enters} enters, ${doesNotEnter} does not).`;
}

/**
 * A figure typed in another unit than an earlier one of the same reading: `path` is the one
 * refused, `firstPath` the one whose unit the reading took.
 */
export function mixedUnitsMessage(kind: ReadingKind, unit: string, firstPath: string, firstUnit: string): string {
  const lead = kind === 'bracket' ? 'Give both blades in the same unit' : 'Give every value in the same unit';
  return `${lead}: this one is in ${unit}, ${readingFieldWords(firstPath)} is in ${firstUnit}.`;
}

/** A figure sent with a kind that does not have it ("One indication" has no blade that enters). */
export function notOfKindMessage(kind: ReadingKind | undefined, field: FigureField): string {
  const owner = readingKindLabels[kindOfField[field]];
  const chosen = kind ? `“${readingKindLabels[kind]}” has no box for ${figureWords[field]}` : `${capitalised(figureWords[field])} belongs to “${owner}”`;
  return `${chosen}: leave it out, or choose “${owner}”.`;
}

/** What a missing figure asks for, in the words of its box. */
export const missingFigureMessages: Readonly<Record<FigureField, string>> = {
  value: 'enter the value as shown',
  passes: 'enter the thickest blade that enters',
  stops: 'enter the thinnest blade that does not enter',
  values: 'enter each value',
};

/** A repeated reading with fewer than two values. */
export const TOO_FEW_VALUES_MESSAGE = 'enter at least 2 values (for a single value, choose “One indication”)';

/** The engine's fields that come from the instrument register, not from what was typed. */
const registerFields = new Set(['resolution', 'uncertainty', 'zeroOffset', 'zeroResolution']);

/**
 * An engine refusal of a reading in the form's words. The engine starts its messages with its
 * field's name ("stops must be…", "resolution must be…"): that name becomes the form's words, a
 * figure from the register says where to correct it, and the engine's bracket-order refusal
 * becomes the form's own sentence. `enginePath` is the engine's path ("values.2", "resolution").
 */
export function engineMessageInFormWords(enginePath: string, message: string, figures?: { passes?: string; stops?: string; unit?: string }): string {
  if (/^stops must be thicker than passes/.test(message) && figures?.passes !== undefined && figures.stops !== undefined) {
    const unit = figures.unit ? ` ${figures.unit}` : '';
    return bracketOrderMessage(`${figures.passes}${unit}`, `${figures.stops}${unit}`);
  }
  if (enginePath === 'values' && /needs at least/.test(message)) return TOO_FEW_VALUES_MESSAGE;
  if (!enginePath || !message.startsWith(`${enginePath} `)) return message;
  const said = capitalised(`${readingFieldWords(enginePath)}${message.slice(enginePath.length)}`);
  return registerFields.has(enginePath.split('.')[0] ?? '') ? `${said}; correct it in the instruments register.` : said;
}
