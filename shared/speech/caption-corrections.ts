/**
 * A clip's caption corrections: the builder's own words for a span of the clip, which take the
 * place of whatever the recognizer heard there. Applied wherever the clip's words are read
 * (captions, transcript, suggestions, the review's second witness), so one rule lives here.
 */
import type { ClipWord } from './speech.schema';

/** A span of a clip: milliseconds from its start, `endMs` ≥ `startMs`. */
export interface TimeSpan {
  startMs: number;
  endMs: number;
}

/** What a correction says: the words said over its span (empty: nothing was said there). */
export interface CorrectionSpan extends TimeSpan {
  text: string;
}

/** Confidence of a word the builder typed: they were there. */
export const CORRECTED_CONFIDENCE = 1;

/**
 * True when two spans share some time. Spans that only touch (one ends as the other starts) do
 * not; a zero-length span overlaps a span it lies in (from its start, up to but not at its end)
 * and a zero-length span at the same instant.
 */
export function spansOverlap(a: TimeSpan, b: TimeSpan): boolean {
  if (a.startMs < b.endMs && b.startMs < a.endMs) return true;
  const aPoint = a.startMs === a.endMs;
  const bPoint = b.startMs === b.endMs;
  if (aPoint && bPoint) return a.startMs === b.startMs;
  if (aPoint) return a.startMs >= b.startMs && a.startMs < b.endMs;
  if (bPoint) return b.startMs >= a.startMs && b.startMs < a.endMs;
  return false;
}

/** The words of a correction's text (split on whitespace), their times spread evenly over its span, confidence 1. */
export function correctionWords(c: CorrectionSpan): ClipWord[] {
  const said = c.text.split(/\s+/).filter((w) => w !== '');
  const length = c.endMs - c.startMs;
  return said.map((word, i) => ({
    word,
    startMs: c.startMs + Math.round((i * length) / said.length),
    endMs: c.startMs + Math.round(((i + 1) * length) / said.length),
    confidence: CORRECTED_CONFIDENCE,
  }));
}

/**
 * The words as corrected: every word that overlaps a correction's span (`spansOverlap`) gives
 * way to the correction's words, in time order among the others (which keep their order). When
 * two corrections overlap, the later in `corrections` wins (stored ones never do: a new one
 * replaces those it overlaps).
 */
export function applyCorrections(words: readonly ClipWord[], corrections: readonly CorrectionSpan[]): ClipWord[] {
  const kept: CorrectionSpan[] = [];
  for (const c of corrections) {
    for (let i = kept.length - 1; i >= 0; i--) if (spansOverlap(kept[i]!, c)) kept.splice(i, 1);
    kept.push(c);
  }
  if (kept.length === 0) return [...words];
  const heard = words.filter((w) => !kept.some((c) => spansOverlap(w, c)));
  const said = kept.flatMap(correctionWords).sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
  const out: ClipWord[] = [];
  let next = 0;
  for (const w of heard) {
    while (next < said.length && said[next]!.startMs < w.startMs) out.push(said[next++]!);
    out.push(w);
  }
  out.push(...said.slice(next));
  return out;
}
