import { infiniteQueryOptions, queryOptions } from '@tanstack/react-query';
import { specListResponseSchema, specResponseSchema } from '@shared/specs/spec-library.schema';
import { apiFetch } from '@/lib/api';

export const SPECS_PAGE_SIZE = 50;

export interface SpecListFilter {
  /** Searches name and applies-to. */
  q?: string;
  /** Own specs only. */
  mine?: boolean;
}

/** Query options for the spec library. */
export const specQueries = {
  all: ['specs'] as const,
  /** Own specs and others' shared ones, one keyset page at a time (`nextAfter` → `after`). */
  list: ({ q = '', mine = false }: SpecListFilter = {}) =>
    infiniteQueryOptions({
      queryKey: [...specQueries.all, 'list', { q: q.trim(), mine }] as const,
      queryFn: ({ pageParam, signal }) => {
        const params = new URLSearchParams({ limit: String(SPECS_PAGE_SIZE) });
        if (q.trim()) params.set('q', q.trim());
        if (mine) params.set('mine', '1');
        if (pageParam !== undefined) params.set('after', String(pageParam));
        return apiFetch(`/api/specs?${params}`, { schema: specListResponseSchema, signal });
      },
      initialPageParam: undefined as number | undefined,
      getNextPageParam: (lastPage) => lastPage.nextAfter ?? undefined,
    }),
  /** One spec with every version, newest first. */
  detail: (specId: number) =>
    queryOptions({
      queryKey: [...specQueries.all, 'detail', specId] as const,
      queryFn: async ({ signal }) => {
        const { spec } = await apiFetch(`/api/specs/${specId}`, { schema: specResponseSchema, signal });
        return spec;
      },
    }),
};
