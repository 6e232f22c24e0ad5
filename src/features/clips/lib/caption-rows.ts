import { captionCues } from '@shared/speech/caption-cues';
import { spansOverlap, type CorrectionSpan } from '@shared/speech/caption-corrections';
import type { CaptionCorrection, TranscriptWord } from '@shared/speech/speech.schema';

/** One line of the caption editor: a cue as the captions show it, or a span corrected to silence. */
export interface CaptionRow {
  /** Stable while the cue stays the same. */
  key: string;
  startMs: number;
  endMs: number;
  /** The cue's words; empty for a span the builder said was silent. */
  text: string;
  /** The corrections it shows (those overlapping it); empty when it is as the recognizer heard it. */
  corrections: CaptionCorrection[];
}

/**
 * The caption editor's rows: the cues of the (already corrected) transcript words, cut as the
 * captions are (`captionCues`), each with the corrections it overlaps, and a row for each
 * correction that left no words (nothing was said there), so it can be undone too. In time order.
 */
export function captionRows(words: readonly TranscriptWord[], corrections: readonly CaptionCorrection[]): CaptionRow[] {
  const cues = captionCues(words.map((w) => ({ word: w.text, startMs: w.startMs, endMs: w.endMs })));
  const rows: CaptionRow[] = cues.map((cue) => ({
    key: `cue-${cue.startMs}-${cue.endMs}`,
    ...cue,
    corrections: corrections.filter((c) => spansOverlap(c, cue)),
  }));
  const shown = new Set(rows.flatMap((r) => r.corrections.map((c) => c.id)));
  for (const c of corrections) {
    if (!shown.has(c.id)) rows.push({ key: `silent-${c.id}`, startMs: c.startMs, endMs: c.endMs, text: '', corrections: [c] });
  }
  return rows.sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
}

/** Text as one caption line: runs of spaces and line breaks as one space, trimmed. */
export function oneLine(text: string): string {
  return text.replace(/\s+/g, ' ').trim();
}

/**
 * The correction that makes a row read `text`. A new correction replaces those it overlaps, so
 * its span takes in the row and every correction the row shows, and its text keeps their words
 * outside the row: only the row's words change. The span ends no later than the clip does.
 */
export function correctionForEdit(row: CaptionRow, words: readonly TranscriptWord[], text: string, clipEndMs: number | null): CorrectionSpan {
  const startMs = Math.min(row.startMs, ...row.corrections.map((c) => c.startMs));
  const wholeEnd = Math.max(row.endMs, ...row.corrections.map((c) => c.endMs));
  const endMs = clipEndMs === null ? wholeEnd : Math.max(startMs, Math.min(wholeEnd, clipEndMs));
  const inSpan = words.filter((w) => spansOverlap(w, { startMs, endMs: wholeEnd }));
  const before = inSpan.filter((w) => w.startMs < row.startMs).map((w) => w.text);
  const after = inSpan.filter((w) => w.startMs >= row.endMs).map((w) => w.text);
  return { startMs, endMs, text: oneLine([...before, text, ...after].join(' ')) };
}
