import { z } from 'zod';
import { storyTagsSchema } from '@shared/stories/story.schema';
import type { StoryFields } from './story-fields';

/**
 * The copy of an entry's unsaved text kept in this browser, so closing the tab, a crash or a
 * lost connection loses nothing. One per entry; removed once the server has the same text.
 */
const draftSchema = z.object({
  /** The stored version the text was written on. */
  lockVersion: z.number().int(),
  /** When it was last written (ISO). */
  at: z.string(),
  values: z.object({
    title: z.string(),
    summary: z.string(),
    workDate: z.string().nullable(),
    tags: storyTagsSchema,
    coverMomentId: z.number().int().nullable(),
    body: z.string(),
  }),
});
export type LocalDraft = z.infer<typeof draftSchema>;

const keyFor = (storyId: number) => `benchproof.story-draft.${storyId}`;

/** The kept copy, or null (none, unreadable, or storage switched off). */
export function readLocalDraft(storyId: number): LocalDraft | null {
  try {
    const raw = window.localStorage.getItem(keyFor(storyId));
    if (!raw) return null;
    const parsed = draftSchema.safeParse(JSON.parse(raw));
    return parsed.success ? parsed.data : null;
  } catch {
    return null;
  }
}

/** Keeps the copy; false when the browser refused (private mode, storage full). */
export function writeLocalDraft(storyId: number, lockVersion: number, values: StoryFields): boolean {
  try {
    const draft: LocalDraft = { lockVersion, at: new Date().toISOString(), values };
    window.localStorage.setItem(keyFor(storyId), JSON.stringify(draft));
    return true;
  } catch {
    return false;
  }
}

export function clearLocalDraft(storyId: number): void {
  try {
    window.localStorage.removeItem(keyFor(storyId));
  } catch {
    // Storage unavailable: there is nothing kept to remove.
  }
}
