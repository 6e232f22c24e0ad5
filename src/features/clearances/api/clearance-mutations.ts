import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  clearanceInputSchema,
  clearancePatchSchema,
  clearanceResponseSchema,
  type ClearanceInput,
  type ClearancePatch,
} from '@shared/clearances/clearance.schema';
import { apiFetch } from '@/lib/api';
import { clearanceQueries } from './clearance-queries';

/** Error code of a clearance a story cites, which cannot be deleted. */
export const CLEARANCE_CITED = 'clearance_cited';

/** POST /api/builds/:buildId/clearances. */
export function useCreateClearance(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: ClearanceInput) => {
      const { clearance } = await apiFetch(`/api/builds/${buildId}/clearances`, {
        method: 'POST',
        body: clearanceInputSchema.parse(input),
        schema: clearanceResponseSchema,
      });
      return clearance;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: clearanceQueries.all }),
  });
}

/** PATCH /api/clearances/:clearanceId from `lockVersion` (409 `edit_conflict` when saved elsewhere since). */
export function useUpdateClearance() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ clearanceId, patch }: { clearanceId: number; patch: ClearancePatch }) => {
      const { clearance } = await apiFetch(`/api/clearances/${clearanceId}`, {
        method: 'PATCH',
        body: clearancePatchSchema.parse(patch),
        schema: clearanceResponseSchema,
      });
      return clearance;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: clearanceQueries.all }),
  });
}

/** DELETE /api/clearances/:clearanceId; refused 409 `clearance_cited` when a story cites it. */
export function useDeleteClearance() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (clearanceId: number) => apiFetch(`/api/clearances/${clearanceId}`, { method: 'DELETE' }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: clearanceQueries.all }),
  });
}
