import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router-dom';
import { apiFetch, clearCsrfToken, errorMessage } from '@/lib/api';
import { useToast } from '@/components/ui/toast';
import { authQueries } from './auth-queries';

/** Signs out, forgets every cached answer (they belonged to the old session) and goes home. */
export function useSignOut() {
  const queryClient = useQueryClient();
  const navigate = useNavigate();
  const { toast } = useToast();

  return useMutation({
    mutationFn: () => apiFetch('/auth/sign-out', { method: 'POST' }),
    onSuccess: async () => {
      clearCsrfToken();
      // Signed out first, so the header and guards see it at once; then leave the page
      // and drop every other answer, which belonged to the old session.
      queryClient.setQueryData(authQueries.me().queryKey, null);
      await navigate('/', { replace: true });
      queryClient.removeQueries({ predicate: (query) => query.queryKey[0] !== authQueries.all[0] });
      toast({ tone: 'success', title: 'Signed out', description: 'You are signed out on this browser.' });
    },
    onError: (error) => {
      toast({
        tone: 'error',
        title: 'Still signed in',
        description: `${errorMessage(error)} Try signing out again.`,
      });
    },
  });
}
