import { useMutation, useQueryClient } from '@tanstack/react-query';
import {
  readingImportRequestSchema,
  readingImportResponseSchema,
  type ImportField,
  type ReadingImportResponse,
} from '@shared/readings/reading-import.schema';
import { clipQueries } from '@/features/clips/api/clip-queries';
import { apiFetch } from '@/lib/api';
import { readingQueries } from './reading-queries';

/** Columns chosen by hand in the dialog, field by field (null: the field takes no column). */
export type MappingChoices = Partial<Record<ImportField, string | null>>;

function postImport(buildId: number, csv: string, mapping: MappingChoices, store: boolean, signal?: AbortSignal): Promise<ReadingImportResponse> {
  return apiFetch(`/api/builds/${buildId}/readings/import`, {
    method: 'POST',
    body: readingImportRequestSchema.parse({ csv, mapping, store }),
    schema: readingImportResponseSchema,
    signal,
  });
}

/** POST …/readings/import with `store: false`: what the file would log, row by row; nothing is stored. */
export function useImportPreview(buildId: number) {
  return useMutation({
    mutationFn: ({ csv, mapping }: { csv: string; mapping: MappingChoices }) => postImport(buildId, csv, mapping, false),
  });
}

/**
 * POST …/readings/import with `store: true`: every new reading, or nothing. A row refused on the
 * server after the preview (say the register changed meanwhile) comes back as a 422 ApiError.
 */
export function useImportReadings(buildId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ csv, mapping }: { csv: string; mapping: MappingChoices }) => postImport(buildId, csv, mapping, true),
    onSuccess: () =>
      Promise.all([
        queryClient.invalidateQueries({ queryKey: readingQueries.all }),
        // Clearances are worked out from readings.
        queryClient.invalidateQueries({ queryKey: ['clearances'] }),
        // New moments on the clips' timelines; a logged reading marks a heard proposal as logged.
        queryClient.invalidateQueries({ queryKey: clipQueries.all }),
      ]),
  });
}
