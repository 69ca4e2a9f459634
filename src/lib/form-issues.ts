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
