import { useSuspenseQuery } from '@tanstack/react-query';
import { data, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { storyIdParamsSchema } from '@shared/stories/story.schema';
import { requireArea } from '@/features/auth/lib/require-role';
import { clipQueries } from '@/features/clips/api/clip-queries';
import { ApiError } from '@/lib/api';
import { queryClient } from '@/lib/query-client';
import { evidenceQueries } from '../api/evidence-queries';
import { storyQueries } from '../api/story-queries';
import { StoryEditor } from '../components/story-editor';

function storyIdFrom(params: unknown): number {
  const parsed = storyIdParamsSchema.safeParse(params);
  if (!parsed.success) throw data(null, { status: 404 });
  return parsed.data.storyId;
}

export async function loader({ request, params }: LoaderFunctionArgs) {
  await requireArea('builds', request);
  const storyId = storyIdFrom(params);
  try {
    // Always the stored version, never a cached one: the editor saves against its lockVersion.
    const story = await queryClient.fetchQuery({ ...storyQueries.detail(storyId), staleTime: 0 });
    void queryClient.prefetchQuery(evidenceQueries.readings(story.buildId));
    void queryClient.prefetchQuery(evidenceQueries.clearances(story.buildId));
    void queryClient.prefetchQuery(clipQueries.list(story.buildId));
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw data(null, { status: 404 });
    throw error;
  }
  return null;
}

/** /stories/:storyId/edit — the diary entry editor. */
export function Component() {
  const storyId = storyIdFrom(useParams());
  const { data: story } = useSuspenseQuery(storyQueries.detail(storyId));
  // Keyed by id: another entry gets a fresh editor, never this one's state.
  return <StoryEditor key={story.id} story={story} />;
}
