import { z } from 'zod';

/** A message the local capture server received, as the admin outbox shows it. */
export const capturedMessageSchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  envelope: z.object({ from: z.string().nullable(), to: z.array(z.string()) }),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string().nullable(),
  headers: z.record(z.string(), z.string()),
  sizeBytes: z.number().int().nonnegative(),
});
/** A captured message. */
export type CapturedMessage = z.infer<typeof capturedMessageSchema>;

/** Response of `GET /api/admin/outbox`: `capturing` is false when real SMTP is configured. */
export const outboxResponseSchema = z.object({ capturing: z.boolean(), items: z.array(capturedMessageSchema) });

/** Response of `GET /api/unsubscribe?token=`: what the token would stop. */
export const unsubscribeInfoSchema = z.object({ builderName: z.string(), followerName: z.string(), subscribed: z.boolean() });
/** Query of `GET` and `POST /api/unsubscribe`: the signed token from the message. */
export const unsubscribeQuerySchema = z.object({ token: z.string().min(10).max(300) });
