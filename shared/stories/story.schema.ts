/**
 * Diary entries (stories) of a build: Markdown bodies whose claims link to readings and
 * clearances (`[end float is now three thou](clearance:end-float-after)`), autosaved drafts with
 * an optimistic lock, revisions, and images.
 */
import { z } from 'zod';
import { dbIdText, dbPositiveInteger, textWithoutNul } from '../http/db-values.schema';
import { isoDateSchema } from '../instruments/instrument.schema';

/** A story's states (the words people see are in `storyStateWords`). */
export const storyStates = ['draft', 'in-review', 'changes-requested', 'published', 'withdrawn'] as const;
export type StoryState = (typeof storyStates)[number];
export const storyStateWords: Readonly<Record<StoryState, string>> = {
  draft: 'draft',
  'in-review': 'in review',
  'changes-requested': 'changes requested',
  published: 'published',
  withdrawn: 'withdrawn',
};
/** The state as the end of "This story is …": a sentence a person reads. */
export const storyStateSentence: Readonly<Record<StoryState, string>> = {
  draft: 'a draft',
  'in-review': 'in review',
  'changes-requested': 'back with its builder for changes',
  published: 'published',
  withdrawn: 'withdrawn from the public',
};

/** Tag groups: machine family, component, operation. */
export const storyTagGroups = ['machine', 'component', 'operation'] as const;
const tag = textWithoutNul.trim().min(1).max(40, 'a tag is at most 40 characters').regex(/^[^,#<>]+$/, 'a tag has no commas, # or angle brackets');
export const storyTagsSchema = z.strictObject({
  machine: z.array(tag).max(10, 'at most 10 tags').default([]),
  component: z.array(tag).max(10, 'at most 10 tags').default([]),
  operation: z.array(tag).max(10, 'at most 10 tags').default([]),
});
export type StoryTags = z.infer<typeof storyTagsSchema>;

/** Longest body accepted (characters): a long diary entry is a few thousand words. */
export const MAX_STORY_BODY = 100_000;

const storyFields = {
  title: textWithoutNul.trim().min(1, 'give the entry a title').max(160, 'at most 160 characters'),
  summary: textWithoutNul.trim().max(500, 'at most 500 characters'),
  workDate: isoDateSchema.nullable(),
  tags: storyTagsSchema,
  /** A moment whose evidence still is the cover. */
  coverMomentId: dbPositiveInteger.nullable(),
  body: textWithoutNul.max(MAX_STORY_BODY, `at most ${MAX_STORY_BODY} characters`),
};

/** Body of `POST /api/builds/:buildId/stories`. */
export const storyInputSchema = z.strictObject({
  title: storyFields.title,
  summary: storyFields.summary.default(''),
  workDate: storyFields.workDate.default(null),
  tags: storyFields.tags.default({ machine: [], component: [], operation: [] }),
  coverMomentId: storyFields.coverMomentId.default(null),
  body: storyFields.body.default(''),
});
export type StoryInput = z.input<typeof storyInputSchema>;

/**
 * Body of `PATCH /api/stories/:storyId` (the editor's autosave): only what is sent changes.
 * `lockVersion` is the version the editor last loaded or saved; a stale one is refused with
 * 409 `edit_conflict`, never merged silently.
 */
export const storyPatchSchema = z
  .strictObject({ ...storyFields, lockVersion: dbPositiveInteger })
  .partial()
  .required({ lockVersion: true });
export type StoryPatch = z.infer<typeof storyPatchSchema>;

/** A story as the API shows it to its builder and reviewers. */
/** A moderator's request for changes, as the builder's screens show it. */
export const changesRequestedSchema = z.object({ reason: z.string(), moderatorName: z.string(), at: z.string() });
export type ChangesRequested = z.infer<typeof changesRequestedSchema>;

export const storySchema = z.object({
  id: z.number().int().positive(),
  buildId: z.number().int().positive(),
  buildTitle: z.string(),
  title: z.string(),
  summary: z.string(),
  workDate: z.string().nullable(),
  tags: storyTagsSchema,
  coverMomentId: z.number().int().positive().nullable(),
  coverUrl: z.string().nullable(),
  body: z.string(),
  state: z.enum(storyStates),
  /** An earlier revision is public (it stays public while a newer one is in review). */
  hasPublicRevision: z.boolean(),
  wordCount: z.number().int().nonnegative(),
  /** While the story is back with its builder: the moderator's reason, who gave it and when. */
  changesRequested: changesRequestedSchema.nullable(),
  lockVersion: z.number().int().positive(),
  updatedBy: z.number().int().positive(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Story = z.infer<typeof storySchema>;

export const storyResponseSchema = z.object({ story: storySchema });
export const storyListQuerySchema = z.object({
  before: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
});
export const storyListResponseSchema = z.object({ items: z.array(storySchema.omit({ body: true })), nextBefore: z.number().int().nullable() });
export const storyIdParamsSchema = z.object({ storyId: dbIdText });

/** A kept state of a story. */
export const storyRevisionSchema = z.object({
  number: z.number().int().positive(),
  reason: z.enum(['autosave', 'kept']),
  title: z.string(),
  summary: z.string(),
  workDate: z.string().nullable(),
  tags: storyTagsSchema,
  coverMomentId: z.number().int().positive().nullable(),
  body: z.string(),
  savedBy: z.number().int().positive(),
  savedByName: z.string(),
  createdAt: z.string(),
});
export type StoryRevision = z.infer<typeof storyRevisionSchema>;
/** Query of `GET /api/stories/:storyId/revisions`: newest first, keyset `before` on the revision number. */
export const storyRevisionListQuerySchema = z.object({
  before: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
});
export const storyRevisionListResponseSchema = z.object({
  items: z.array(storyRevisionSchema.omit({ body: true })),
  /** Pass as `before` for the next (older) page; null on the last page. */
  nextBefore: z.number().int().nullable().optional(),
});
export const storyRevisionResponseSchema = z.object({ revision: storyRevisionSchema });
export const storyRevisionParamsSchema = z.object({
  storyId: dbIdText,
  number: dbIdText,
});

/** An image uploaded into a story. */
export const storyImageSchema = z.object({
  id: z.number().int().positive(),
  storyId: z.number().int().positive(),
  url: z.string(),
  contentType: z.string(),
  sizeBytes: z.number().int().positive(),
  width: z.number().int().positive().nullable(),
  height: z.number().int().positive().nullable(),
  alt: z.string(),
  /** Ready to paste: `![alt](url)`. */
  markdown: z.string(),
});
export type StoryImage = z.infer<typeof storyImageSchema>;
export const storyImageResponseSchema = z.object({ image: storyImageSchema });
export const storyImageListResponseSchema = z.object({ items: z.array(storyImageSchema) });
export const storyImageIdParamsSchema = z.object({ imageId: dbIdText });
/** Form field of the file in `POST /api/stories/:storyId/images` (multipart), and the alt text field. */
export const storyImageUploadField = 'file';
export const storyImageAltField = 'alt';
/** Image types a story accepts (checked by magic bytes, not by name). */
export const storyImageTypes = ['image/jpeg', 'image/png', 'image/webp'] as const;

/**
 * The first index of `needle` at or after a position, for positions that only grow: each search
 * starts where the last one ended, so a whole scan of a text costs one pass per needle.
 */
function forwardFinder(text: string, needle: string): (from: number) => number {
  let found = -2; // -2: not searched yet; -1: none after the last search's start
  let searchedFrom = 0;
  return (from) => {
    if (found === -1 && from >= searchedFrom) return -1;
    if (found >= from) return found;
    searchedFrom = Math.max(from, found + 1);
    found = text.indexOf(needle, searchedFrom);
    return found;
  };
}

/**
 * Words in a body for the editor's count: runs of letters or digits; code fences, image and link
 * targets and HTML tags left out, a link's or image's text counted. Linear in the body's length
 * (no regular expression that backtracks over unclosed `[`, `<` or fences), so a hostile body of
 * 99,000 `[` costs what any body of that length costs. The editor runs the same function.
 */
export function countWords(markdown: string): number {
  // The same four steps, in the same order, as fences → images → links → tags by regular
  // expressions, each done in one forward pass.
  const text = dropTags(keepLinkTexts(keepLinkTexts(dropFences(markdown), true), false));
  return (text.match(/[\p{L}\p{N}]+(?:[.'’-][\p{L}\p{N}]+)*/gu) ?? []).length;
}

/** ```…``` (closed fences) → a space. */
function dropFences(s: string): string {
  const next = forwardFinder(s, '```');
  const kept: string[] = [];
  let last = 0;
  for (let i = s.indexOf('`'); i >= 0 && i < s.length; ) {
    const end = s.startsWith('```', i) ? next(i + 3) : -1;
    if (end >= 0) {
      kept.push(s.slice(last, i), ' ');
      last = end + 3;
      i = s.indexOf('`', last);
    } else i = s.indexOf('`', i + 1);
  }
  kept.push(s.slice(last));
  return kept.join('');
}

/** `![text](target)` (images) or `[text](target)` (links) → text. */
function keepLinkTexts(s: string, images: boolean): string {
  const nextClose = forwardFinder(s, ']');
  const nextParen = forwardFinder(s, ')');
  const kept: string[] = [];
  let last = 0;
  for (let i = s.indexOf(images ? '![' : '['); i >= 0; ) {
    const open = images ? i + 1 : i;
    const close = nextClose(open + 1);
    const paren = close >= 0 && s[close + 1] === '(' ? nextParen(close + 2) : -1;
    if (paren >= 0) {
      kept.push(s.slice(last, i), s.slice(open + 1, close));
      last = paren + 1;
    }
    i = s.indexOf(images ? '![' : '[', paren >= 0 ? last : i + 1);
  }
  kept.push(s.slice(last));
  return kept.join('');
}

/** `<…>` with at least one character inside (HTML tags) → a space. */
function dropTags(s: string): string {
  const nextGt = forwardFinder(s, '>');
  const kept: string[] = [];
  let last = 0;
  for (let i = s.indexOf('<'); i >= 0; ) {
    const gt = nextGt(i + 1);
    if (gt > i + 1) {
      kept.push(s.slice(last, i), ' ');
      last = gt + 1;
      i = s.indexOf('<', last);
    } else i = s.indexOf('<', i + 1);
  }
  kept.push(s.slice(last));
  return kept.join('');
}
