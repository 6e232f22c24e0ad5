import { z } from 'zod';
import { storyPatchSchema, type Story, type StoryTags } from '@shared/stories/story.schema';

/** The editable fields of an entry, all required: what the form holds and what autosave sends. */
export const storyFieldsSchema = storyPatchSchema.omit({ lockVersion: true }).required();
export type StoryFieldsInput = z.input<typeof storyFieldsSchema>;
export type StoryFields = z.output<typeof storyFieldsSchema>;
export const storyFieldNames = ['title', 'summary', 'workDate', 'tags', 'coverMomentId', 'body'] as const;
export type StoryFieldName = (typeof storyFieldNames)[number];

/** The form's values for a stored entry (or revision). */
export function fieldsOf(story: Pick<Story, StoryFieldName>): StoryFields {
  return {
    title: story.title,
    summary: story.summary,
    workDate: story.workDate,
    tags: { machine: [...story.tags.machine], component: [...story.tags.component], operation: [...story.tags.operation] },
    coverMomentId: story.coverMomentId,
    body: story.body,
  };
}

function sameTags(a: StoryTags, b: StoryTags): boolean {
  return (['machine', 'component', 'operation'] as const).every((g) => a[g].length === b[g].length && a[g].every((t, i) => t === b[g][i]));
}

/** True when one field holds the same value in both. */
export function sameField(name: StoryFieldName, a: StoryFieldsInput, b: StoryFieldsInput): boolean {
  if (name === 'tags') return sameTags(normaliseTags(a.tags), normaliseTags(b.tags));
  return a[name] === b[name];
}

/** The fields whose values differ. */
export function changedFields(a: StoryFieldsInput, b: StoryFieldsInput): StoryFieldName[] {
  return storyFieldNames.filter((name) => !sameField(name, a, b));
}

function normaliseTags(tags: StoryFieldsInput['tags']): StoryTags {
  return { machine: tags.machine ?? [], component: tags.component ?? [], operation: tags.operation ?? [] };
}

/** Words for a field in messages ("the title"). */
export const fieldWords: Record<StoryFieldName, string> = {
  title: 'title',
  summary: 'summary',
  workDate: 'work date',
  tags: 'tags',
  coverMomentId: 'cover still',
  body: 'text',
};
