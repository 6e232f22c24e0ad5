import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  buildInputSchema,
  buildPatchSchema,
  buildResponseSchema,
  type BuildInput,
  type BuildPatch,
} from '@shared/builds/build.schema';
import { apiFetch } from '@/lib/api';
import { buildQueries } from './build-queries';

/** POST /api/builds. The new build goes into the cache so its workspace opens without a second request. */
export function useCreateBuild() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (input: BuildInput) => {
      const { build } = await apiFetch('/api/builds', {
        method: 'POST',
        body: buildInputSchema.parse(input),
        schema: buildResponseSchema,
      });
      return build;
    },
    onSuccess: async (build) => {
      queryClient.setQueryData(buildQueries.detail(build.id).queryKey, build);
      await queryClient.invalidateQueries({ queryKey: buildQueries.all });
    },
  });
}

/** PATCH /api/builds/:buildId: title, subject, parts (the parts list is sent whole). */
export function useUpdateBuild(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (patch: BuildPatch) => {
      const { build } = await apiFetch(`/api/builds/${buildId}`, {
        method: 'PATCH',
        body: buildPatchSchema.parse(patch),
        schema: buildResponseSchema,
      });
      return build;
    },
    onSuccess: async (build) => {
      queryClient.setQueryData(buildQueries.detail(build.id).queryKey, build);
      await queryClient.invalidateQueries({ queryKey: buildQueries.all });
    },
  });
}

/** Marks every build answer stale, e.g. after clips were added or removed (the clip count and dates change). */
export function useInvalidateBuilds() {
  const queryClient = useQueryClient();
  return () => queryClient.invalidateQueries({ queryKey: buildQueries.all });
}
