/**
 * How a clip's words are cut into caption cues: shared so the server's WebVTT captions and the
 * builder's caption editor show the same cues from the same words.
 */

/** One caption cue: milliseconds from the start of the clip, and its words. */
export interface CaptionCue {
  startMs: number;
  endMs: number;
  text: string;
}

/** A word as the cue rule reads it: its text and times in ms. */
export interface CueWord {
  word: string;
  startMs: number;
  endMs: number;
}

/** How captions are cut: our rule of thumb, about two lines a reader takes in at a glance. */
export const CAPTION_RULES = {
  /** Most words in one cue. */
  maxWords: 7,
  /** Longest cue, from its first word's start to its last word's end, ms. */
  maxMs: 3500,
  /** A pause longer than this between two words starts a new cue, ms. */
  pauseMs: 600,
} as const;

/**
 * Caption cues from words in the order heard: a cue holds up to 7 words and 3.5 s, and a pause
 * over 0.6 s starts a new one. A cue runs from its first word's start to its last word's end
 * (at least 1 ms), so cues never overlap.
 */
export function captionCues(words: readonly CueWord[]): CaptionCue[] {
  const sorted = [...words].sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
  const cues: CaptionCue[] = [];
  let current: { startMs: number; endMs: number; words: string[] } | null = null;
  const close = () => {
    if (!current) return;
    cues.push({ startMs: current.startMs, endMs: Math.max(current.endMs, current.startMs + 1), text: current.words.join(' ') });
    current = null;
  };
  for (const w of sorted) {
    const startMs = Math.max(0, Math.round(w.startMs));
    const endMs = Math.max(startMs, Math.round(w.endMs));
    if (
      current &&
      (current.words.length >= CAPTION_RULES.maxWords ||
        endMs - current.startMs > CAPTION_RULES.maxMs ||
        startMs - current.endMs > CAPTION_RULES.pauseMs)
    ) {
      close();
    }
    if (current) {
      current.words.push(w.word);
      current.endMs = Math.max(current.endMs, endMs);
    } else {
      current = { startMs: Math.max(startMs, cues.at(-1)?.endMs ?? 0), endMs, words: [w.word] };
    }
  }
  close();
  return cues;
}
