/** One chapter cue: milliseconds from the start of the clip, and a title. */
export interface VttCue {
  startMs: number;
  endMs: number;
  text: string;
}

/**
 * A WebVTT file (for `<track kind="chapters">`) with one cue per entry, sorted by start as the
 * format requires. Text is reduced to one line and `&`, `<`, `>` escaped, so a title such as
 * "gap --> 0.2 mm <b>" can neither end the cue nor open a tag. Cues must have endMs > startMs ≥ 0.
 */
export function chaptersVtt(cues: VttCue[]): string {
  const sorted = [...cues].sort((a, b) => a.startMs - b.startMs || a.endMs - b.endMs);
  const blocks = sorted.map((cue, i) => {
    const start = Math.round(cue.startMs);
    const end = Math.round(cue.endMs);
    if (!(start >= 0 && end > start)) throw new RangeError(`Cue ${i + 1} needs 0 ≤ start < end (got ${cue.startMs} → ${cue.endMs} ms)`);
    return `${i + 1}\n${timestamp(start)} --> ${timestamp(end)}\n${escapeCueText(cue.text)}`;
  });
  return ['WEBVTT', ...blocks].join('\n\n') + '\n';
}

/** hh:mm:ss.ttt (hours grow past two digits when they must). */
function timestamp(ms: number): string {
  const h = Math.floor(ms / 3_600_000);
  const m = Math.floor((ms % 3_600_000) / 60_000);
  const s = Math.floor((ms % 60_000) / 1000);
  const t = ms % 1000;
  return `${String(h).padStart(2, '0')}:${String(m).padStart(2, '0')}:${String(s).padStart(2, '0')}.${String(t).padStart(3, '0')}`;
}

function escapeCueText(text: string): string {
  // A line break could leave an empty line (which ends the cue) or a line holding "-->".
  const oneLine = text.replace(/\s+/g, ' ').trim();
  return oneLine.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/**
 * The chapter title of a moment: its readings as "name: value with unit", joined with "; ",
 * or its own label when no reading is tied to it.
 */
export function momentCueText(label: string, readings: readonly { name: string; display: string }[] = []): string {
  if (readings.length === 0) return label;
  return readings.map((r) => `${r.name}: ${r.display}`).join('; ');
}

const LAST_CUE_MS = 5000;

/**
 * Chapter cues from moments: each runs from its moment to the next later moment; the last runs
 * 5 s, cut at the end of the clip. Moments at the same time get the same span (WebVTT chapters
 * may nest, not overlap). A blank label becomes "Moment at m:ss.t".
 */
export function cuesFromMoments(moments: { atMs: number; label: string }[], durationMs: number): VttCue[] {
  const sorted = [...moments].sort((a, b) => a.atMs - b.atMs);
  return sorted.map((moment) => {
    const startMs = Math.max(0, Math.round(moment.atMs));
    const next = sorted.find((m) => Math.round(m.atMs) > startMs);
    let endMs = next ? Math.round(next.atMs) : Math.min(startMs + LAST_CUE_MS, Math.round(durationMs));
    // A moment at (or, with a stale duration, after) the very end still gets a visible cue.
    if (!(endMs > startMs)) endMs = startMs + LAST_CUE_MS;
    return { startMs, endMs, text: moment.label.trim() || `Moment at ${clock(startMs)}` };
  });
}

function clock(ms: number): string {
  const totalTenths = Math.floor(ms / 100);
  const m = Math.floor(totalTenths / 600);
  const s = ((totalTenths % 600) / 10).toFixed(1).padStart(4, '0');
  return `${m}:${s}`;
}
