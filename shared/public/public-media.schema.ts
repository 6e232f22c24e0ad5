import { z } from 'zod';
import { frameQuerySchema } from '../clips/clip.schema';

/**
 * The query of a public clip's video and poster: `v`, the version of its media, when the address
 * came from a page (12 hex digits); an address naming the current version may be kept for good.
 */
export const publicMediaQuerySchema = z.object({
  v: z
    .string()
    .regex(/^[0-9a-f]{12}$/, 'must be the 12-digit media version the page gave')
    .optional(),
});

/** The query of a public evidence still: its time and, optionally, its clip's media version. */
export const publicFrameQuerySchema = frameQuerySchema.extend(publicMediaQuerySchema.shape);
