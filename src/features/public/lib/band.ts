import type { z } from 'zod';
import type { bandUmSchema } from '@shared/clearances/clearance.schema';

/** A spec's limits in µm, as the API sends them for a band picture. */
export type BandUm = z.infer<typeof bandUmSchema>;
