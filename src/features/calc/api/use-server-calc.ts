import { useMutation } from '@tanstack/react-query';
import { calcResponseSchema, type CalcRequest } from '@shared/measure/calc.schema';
import { apiFetch } from '@/lib/api';

/** Query keys of the calculator feature (the server check is a mutation; nothing is cached). */
export const calcKeys = {
  all: ['calc'] as const,
  serverCheck: () => [...calcKeys.all, 'server-check'] as const,
};

/** POST /api/calc: the server works the same request out, so the page can show both agree. */
export function useServerCalc() {
  return useMutation({
    mutationKey: calcKeys.serverCheck(),
    mutationFn: (request: CalcRequest) => apiFetch('/api/calc', { method: 'POST', body: request, schema: calcResponseSchema }),
  });
}
