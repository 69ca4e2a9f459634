import type { z } from 'zod';
import { isApiRequestError } from './api-client';

/** Field messages by top-level field name: the first issue of each field wins. */
export type FieldErrors = Record<string, string>;

/** Check a form body with the same shared zod schema the server uses, before sending it. */
export function checkWith<S extends z.ZodType>(schema: S, body: unknown): { ok: true; data: z.output<S> } | { ok: false; errors: FieldErrors } {
  const result = schema.safeParse(body);
  if (result.success) return { ok: true, data: result.data };
  const errors: FieldErrors = {};
  for (const issue of result.error.issues) {
    const field = String(issue.path[0] ?? '_');
    if (!(field in errors)) errors[field] = issue.message;
  }
  return { ok: false, errors };
}

/** A field's message: the local check's first, else the server's. */
export function fieldError(local: FieldErrors, serverError: unknown, field: string): string | undefined {
  if (local[field]) return local[field];
  return isApiRequestError(serverError) ? serverError.fieldMessage(field) : undefined;
}

/**
 * The server's message for a nested field such as `['options', 'hold', 0]`: the first issue at
 * that path or below it (only at it, with `exact`). Paths compare as text, so 0 and '0' match.
 */
export function issueAt(serverError: unknown, path: readonly (string | number)[], exact = false): string | undefined {
  if (!isApiRequestError(serverError)) return undefined;
  const want = path.map(String);
  return serverError.issues.find((i) => (exact ? i.path.length === want.length : i.path.length >= want.length) && want.every((p, k) => String(i.path[k]) === p))?.message;
}
