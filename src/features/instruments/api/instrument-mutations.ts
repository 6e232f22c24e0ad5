import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  instrumentInputSchema,
  instrumentPatchSchema,
  instrumentResponseSchema,
  zeroCheckInputSchema,
  zeroCheckResponseSchema,
  type InstrumentInput,
  type InstrumentPatch,
  type ZeroCheckInput,
} from '@shared/instruments/instrument.schema';
import { apiFetch } from '@/lib/api';
import { instrumentQueries } from './instrument-queries';

/** POST /api/instruments. */
export function useCreateInstrument() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: InstrumentInput) => {
      const { instrument } = await apiFetch('/api/instruments', {
        method: 'POST',
        body: instrumentInputSchema.parse(input),
        schema: instrumentResponseSchema,
      });
      return instrument;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: instrumentQueries.all }),
  });
}

/** PATCH /api/instruments/:instrumentId with the `lockVersion` the editor started from (409 `edit_conflict` otherwise). */
export function useUpdateInstrument() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async ({ instrumentId, patch }: { instrumentId: number; patch: InstrumentPatch }) => {
      const { instrument } = await apiFetch(`/api/instruments/${instrumentId}`, {
        method: 'PATCH',
        body: instrumentPatchSchema.parse(patch),
        schema: instrumentResponseSchema,
      });
      return instrument;
    },
    onSuccess: async (instrument) => {
      queryClient.setQueryData(instrumentQueries.detail(instrument.id).queryKey, instrument);
      await queryClient.invalidateQueries({ queryKey: instrumentQueries.all });
    },
  });
}

/** DELETE /api/instruments/:instrumentId; refused with 409 `instrument_in_use` once readings or zero checks use it. */
export function useDeleteInstrument() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (instrumentId: number) => apiFetch(`/api/instruments/${instrumentId}`, { method: 'DELETE' }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: instrumentQueries.all }),
  });
}

/** POST /api/instruments/:instrumentId/zero-checks; lengths in the instrument's unit. */
export function useLogZeroCheck(instrumentId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: ZeroCheckInput) => {
      const { zeroCheck } = await apiFetch(`/api/instruments/${instrumentId}/zero-checks`, {
        method: 'POST',
        body: zeroCheckInputSchema.parse(input),
        schema: zeroCheckResponseSchema,
      });
      return zeroCheck;
    },
    // The list carries each instrument's latest zero check, so the whole root goes stale.
    onSuccess: () => queryClient.invalidateQueries({ queryKey: instrumentQueries.all }),
  });
}
