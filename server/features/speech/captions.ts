import type { ClipWord } from '@shared/speech/speech.schema';
import { chaptersVtt, type VttCue } from '../clips/media/vtt';

/**
 * A recognizer's word as people read it, or null for its markers: sentence starts and ends and
 * silences (`<s>`, `</s>`, `<sil>`), noises (`[NOISE]`, `++BREATH++`); an alternate
 * pronunciation's number is dropped ("hundred(4)" is "hundred").
 */
export function cleanWord(raw: string): string | null {
  const word = raw.trim().replace(/\(\d+\)$/, '');
  if (word === '' || /^<.*>$/.test(word) || /^\[.*\]$/.test(word) || /^\+\+.*\+\+$/.test(word)) return null;
  return word;
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
export function captionCues(words: readonly Pick<ClipWord, 'word' | 'startMs' | 'endMs'>[]): VttCue[] {
  const sorted = [...words].sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
  const cues: VttCue[] = [];
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

/**
 * The captions of a clip as a WebVTT file (W3C WebVTT: the "WEBVTT" line, then cues of a timing
 * line `00:00:01.230 --> 00:00:02.450` and their text). No words give a file with no cues, which
 * is still valid. Cue text is escaped by the chapter writer, so words cannot open tags or end a cue.
 */
export function captionsVtt(words: readonly Pick<ClipWord, 'word' | 'startMs' | 'endMs'>[]): string {
  return chaptersVtt(captionCues(words));
}
