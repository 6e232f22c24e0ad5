// Route parameters read the way the server's shared schemas read them, without loading zod on a
// reader's first page. A test holds each function to its schema.

/** An id in the address, as `z.coerce.number().int().positive()` reads it (a safe integer above 0); null otherwise. */
export function positiveIntParam(value: string | undefined): number | null {
  const n = Number(value);
  return Number.isSafeInteger(n) && n > 0 ? n : null;
}

/** A short text in the address, trimmed, as `z.string().trim().min(1).max(max)` reads it; null otherwise. */
export function textParam(value: string | undefined, max: number): string | null {
  if (typeof value !== 'string') return null;
  const text = value.trim();
  return text.length >= 1 && text.length <= max ? text : null;
}
