import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import {
  readingInputSchema,
  readingPatchSchema,
  readingResponseSchema,
  type ReadingInput,
  type ReadingPatch,
} from '@shared/readings/reading.schema';
import { clipQueries } from '@/features/clips/api/clip-queries';
import { apiFetch } from '@/lib/api';
import { readingQueries } from './reading-queries';

/** Error codes the server refuses a reading's deletion with. */
export const READING_IN_USE = 'reading_in_use';
export const READING_CITED = 'reading_cited';
/** Error code of a save over someone else's newer save (the optimistic lock). */
export const EDIT_CONFLICT = 'edit_conflict';

/** Clearances are worked out from readings on every request, so they change with them. */
const CLEARANCES_ROOT = ['clearances'] as const;

async function refreshAfterChange(queryClient: QueryClient) {
  await Promise.all([
    queryClient.invalidateQueries({ queryKey: readingQueries.all }),
    queryClient.invalidateQueries({ queryKey: CLEARANCES_ROOT }),
    // A proposal heard in a clip is marked logged by a reading near its time.
    queryClient.invalidateQueries({ queryKey: clipQueries.allSuggestions }),
  ]);
}

/** POST /api/builds/:buildId/readings. Field refusals come back as an ApiError whose details name the fields. */
export function useCreateReading(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: ReadingInput) => {
      const { reading } = await apiFetch(`/api/builds/${buildId}/readings`, {
        method: 'POST',
        body: readingInputSchema.parse(input),
        schema: readingResponseSchema,
      });
      return reading;
    },
    onSuccess: () => refreshAfterChange(queryClient),
  });
}

/** PATCH /api/readings/:readingId with the version edited from; a stale one is refused 409 `edit_conflict`. */
export function useUpdateReading() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ readingId, patch }: { readingId: number; patch: ReadingPatch }) => {
      const { reading } = await apiFetch(`/api/readings/${readingId}`, {
        method: 'PATCH',
        body: readingPatchSchema.parse(patch),
        schema: readingResponseSchema,
      });
      return reading;
    },
    onSuccess: () => refreshAfterChange(queryClient),
  });
}

/** DELETE /api/readings/:readingId; refused 409 `reading_in_use` (a clearance uses it) or `reading_cited` (a story cites it). */
export function useDeleteReading() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (readingId: number) => apiFetch(`/api/readings/${readingId}`, { method: 'DELETE' }),
    onSuccess: () => refreshAfterChange(queryClient),
  });
}
