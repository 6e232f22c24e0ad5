import type { Clip } from '@shared/clips/clip.schema';

/** What this needs of an upload: whether it became a clip, and which. */
export interface SentUpload {
  state: string;
  clipId: number | null;
}

/**
 * The clips that uploads from this page became and that are now ready to play, in the order the
 * files were chosen, leaving out those in `seen` (already opened once).
 */
export function readyUploadedClips(uploads: readonly SentUpload[], clips: readonly Clip[] | undefined, seen: ReadonlySet<number>): Clip[] {
  if (!clips) return [];
  const ready: Clip[] = [];
  for (const upload of uploads) {
    if (upload.state !== 'sent' || upload.clipId === null || seen.has(upload.clipId)) continue;
    const clip = clips.find((c) => c.id === upload.clipId);
    if (clip && clip.status === 'ready' && clip.videoUrl !== null) ready.push(clip);
  }
  return ready;
}
