import { queryOptions } from '@tanstack/react-query';
import { clearanceListResponseSchema, type Clearance } from '@shared/clearances/clearance.schema';
import { readingListResponseSchema, type Reading } from '@shared/readings/reading.schema';
import { apiFetch } from '@/lib/api';

/** The largest pages the list routes allow: a build's evidence usually arrives in one request. */
const READINGS_PAGE = 1000;
const CLEARANCES_PAGE = 500;

async function allPages<T>(fetchPage: (after: number | undefined) => Promise<{ items: T[]; nextAfter: number | null }>): Promise<T[]> {
  const items: T[] = [];
  let after: number | undefined;
  do {
    const page = await fetchPage(after);
    items.push(...page.items);
    after = page.nextAfter ?? undefined;
  } while (after !== undefined);
  return items;
}

/**
 * Everything a claim in a diary entry may point at: all readings and clearances of the build.
 * Keys sit under the readings and clearances features' roots, so when those features
 * invalidate their caches after an edit, the editor's claim checks follow.
 */
export const evidenceQueries = {
  readings: (buildId: number) =>
    queryOptions({
      queryKey: ['readings', 'claim-targets', buildId] as const,
      queryFn: ({ signal }) =>
        allPages<Reading>((after) => {
          const params = new URLSearchParams({ limit: String(READINGS_PAGE) });
          if (after !== undefined) params.set('after', String(after));
          return apiFetch(`/api/builds/${buildId}/readings?${params}`, { schema: readingListResponseSchema, signal });
        }),
    }),
  clearances: (buildId: number) =>
    queryOptions({
      queryKey: ['clearances', 'claim-targets', buildId] as const,
      queryFn: ({ signal }) =>
        allPages<Clearance>((after) => {
          const params = new URLSearchParams({ limit: String(CLEARANCES_PAGE) });
          if (after !== undefined) params.set('after', String(after));
          return apiFetch(`/api/builds/${buildId}/clearances?${params}`, { schema: clearanceListResponseSchema, signal });
        }),
    }),
};
