import { z } from 'zod';

/** One problem inside an error body, usually a field that failed validation. */
export const errorDetailSchema = z.object({
  path: z.string().optional(),
  message: z.string(),
});

/** The single error body every failing API response carries. */
export const errorBodySchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    details: z.array(errorDetailSchema).default([]),
  }),
});

export type ErrorDetail = z.infer<typeof errorDetailSchema>;
export type ErrorBody = z.infer<typeof errorBodySchema>;

/** Response of `GET /api/csrf-token`. */
export const csrfTokenResponseSchema = z.object({ token: z.string() });
