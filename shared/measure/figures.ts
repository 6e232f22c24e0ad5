/**
 * Figures as typed. A figure is a JSON number or a decimal string; the string keeps its trailing
 * zeros, so "0.5640" says the instrument showed four places (GUM 3.2.3–3.2.4 need the reading as
 * shown, and its resolution). Everything here is exact: a figure becomes an `ExactDecimal`.
 */
import { z } from 'zod';
import { decimalFromNumber, parseDecimalText, MAX_DECIMAL_TEXT_LENGTH, type ExactDecimal } from './decimal';

/** A figure as sent: a finite number or a decimal string. */
export type Figure = number | string;

/** Schema of a figure: a finite number or a plain decimal string ("0.5640", "-3.5"). */
export function figureSchema(field: string) {
  return z.union([z.number(), z.string()], {
    error: (issue) => (issue.input === undefined ? `${field} is required` : `${field} must be a number or a decimal string like "0.5640"`),
  });
}

/** What is wrong with a figure as such (before its unit's own rules), or null. */
export function figureProblem(field: string, figure: Figure): string | null {
  if (typeof figure === 'number') return Number.isFinite(figure) ? null : `${field} must be a finite number`;
  const text = figure.trim();
  if (text.length > MAX_DECIMAL_TEXT_LENGTH) return `${field} has more than ${MAX_DECIMAL_TEXT_LENGTH} characters`;
  return parseDecimalText(text) ? null : `${field} must be a decimal number like "0.5640" (digits, one point, an optional sign; no exponent)`;
}

/** The exact decimal of a figure; null when it is not one (validate first). */
export function figureToDecimal(figure: Figure): ExactDecimal | null {
  return typeof figure === 'number' ? decimalFromNumber(figure) : parseDecimalText(figure.trim());
}

/** A figure as a double, for bounds and drawing (not for stored values). */
export function figureToNumber(figure: Figure): number {
  return typeof figure === 'number' ? figure : Number(figure.trim());
}

/** True when the figure was sent as text, so its trailing zeros are the sender's. */
export function figureIsText(figure: Figure): boolean {
  return typeof figure === 'string';
}
