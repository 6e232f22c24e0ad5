import { useMutation, useQueryClient } from '@tanstack/react-query';
import type {
  FollowPatch,
  followResponseSchema,
  Preferences,
  PreferencesPatch,
  preferencesResponseSchema,
} from '@shared/public/follows.schema';
import { authQueries } from '@/features/auth/api/auth-queries';
import { publicQueries } from '@/features/public/api/public-queries';
import { apiFetch, type Unparsed } from '@/lib/api';

// The follow button and the units switch are on the story page, so these send typed bodies (the
// server validates them) and read unparsed answers: no zod in the reader's first load.
import { followQueries } from './follow-queries';

/** Following changes the profile's count and the home page's "from builders you follow". */
function useInvalidateFollowing() {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: followQueries.all }),
      queryClient.invalidateQueries({ queryKey: publicQueries.all }),
    ]);
}

/** POST /api/builders/:builderId/follow, or DELETE it to unfollow. */
export function useSetFollowing() {
  const invalidate = useInvalidateFollowing();
  return useMutation({
    mutationFn: async ({ builderId, follow }: { builderId: number; follow: boolean }) => {
      if (follow) await apiFetch<Unparsed<typeof followResponseSchema>>(`/api/builders/${builderId}/follow`, { method: 'POST', body: {} });
      else await apiFetch(`/api/builders/${builderId}/follow`, { method: 'DELETE' });
      return follow;
    },
    onSettled: invalidate,
  });
}

/** PATCH /api/me/follows/:builderId: mail when this builder publishes, on or off. */
export function useSetFollowEmail() {
  const invalidate = useInvalidateFollowing();
  return useMutation({
    mutationFn: ({ builderId, emailOnPublish }: { builderId: number; emailOnPublish: boolean }) =>
      apiFetch<Unparsed<typeof followResponseSchema>>(`/api/me/follows/${builderId}`, { method: 'PATCH', body: { emailOnPublish } satisfies FollowPatch }),
    onSettled: invalidate,
  });
}

/**
 * PATCH /api/me/preferences. The cache is updated first so a units switch answers at once; a
 * refusal puts the previous preferences back. The saved default units go into `/api/me`'s cache.
 */
export function useUpdatePreferences() {
  const queryClient = useQueryClient();
  const key = followQueries.preferences().queryKey;
  return useMutation({
    mutationFn: async (patch: PreferencesPatch) =>
      (await apiFetch<Unparsed<typeof preferencesResponseSchema>>('/api/me/preferences', { method: 'PATCH', body: patch })).preferences,
    onMutate: async (patch) => {
      await queryClient.cancelQueries({ queryKey: key });
      const previous = queryClient.getQueryData<Preferences>(key);
      if (previous) queryClient.setQueryData<Preferences>(key, { ...previous, ...patch });
      return { previous };
    },
    onError: (_error, _patch, context) => {
      if (context?.previous) queryClient.setQueryData(key, context.previous);
    },
    onSuccess: (preferences) => {
      queryClient.setQueryData(key, preferences);
      // `/api/me` answers the default units too; the calculator and the instrument form read them there.
      queryClient.setQueryData(authQueries.me().queryKey, (user) =>
        user ? { ...user, unitSystem: preferences.unitSystem, temperatureScale: preferences.temperatureScale } : user,
      );
    },
  });
}
