import { captionCues } from '@shared/speech/caption-cues';
import type { ClipWord } from '@shared/speech/speech.schema';
import { chaptersVtt } from '../clips/media/vtt';

// The cue rule is shared with the builder's caption editor, which shows the same cues.
export { CAPTION_RULES, captionCues } from '@shared/speech/caption-cues';

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

/**
 * The captions of a clip as a WebVTT file (W3C WebVTT: the "WEBVTT" line, then cues of a timing
 * line `00:00:01.230 --> 00:00:02.450` and their text). No words give a file with no cues, which
 * is still valid. Cue text is escaped by the chapter writer, so words cannot open tags or end a cue.
 */
export function captionsVtt(words: readonly Pick<ClipWord, 'word' | 'startMs' | 'endMs'>[]): string {
  return chaptersVtt(captionCues(words));
}
