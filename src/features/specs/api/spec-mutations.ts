import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  specInputSchema,
  specPatchSchema,
  specResponseSchema,
  specVersionInputSchema,
  specVersionResponseSchema,
  type SpecInput,
  type SpecPatch,
  type SpecVersionInput,
} from '@shared/specs/spec-library.schema';
import { apiFetch } from '@/lib/api';
import { specQueries } from './spec-queries';

/** POST /api/specs: the spec and its first version. */
export function useCreateSpec() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: SpecInput) => {
      const { spec } = await apiFetch('/api/specs', { method: 'POST', body: specInputSchema.parse(input), schema: specResponseSchema });
      return spec;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: specQueries.all }),
  });
}

/** PATCH /api/specs/:specId: name, applies-to, shared, with the `lockVersion` the editor started from. */
export function useUpdateSpec(specId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (patch: SpecPatch) => {
      const { spec } = await apiFetch(`/api/specs/${specId}`, { method: 'PATCH', body: specPatchSchema.parse(patch), schema: specResponseSchema });
      return spec;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: specQueries.all }),
  });
}

/** POST /api/specs/:specId/versions: new figures as the next version (versions are never edited). */
export function useAddSpecVersion(specId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: SpecVersionInput) => {
      const { version } = await apiFetch(`/api/specs/${specId}/versions`, {
        method: 'POST',
        body: specVersionInputSchema.parse(input),
        schema: specVersionResponseSchema,
      });
      return version;
    },
    onSuccess: () => queryClient.invalidateQueries({ queryKey: specQueries.all }),
  });
}
