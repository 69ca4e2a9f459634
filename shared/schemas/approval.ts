import { z } from 'zod';

/**
 * One line of an approval checklist: what must hold, whether it does, and the open items that
 * keep it from holding (each a short sentence naming the thing, e.g. `jes: submitted`).
 */
export const checklistItemSchema = z.object({
  key: z.enum(['entries-accepted', 'no-open-questions', 'control-fit', 'expected-results', 'pulls-explained']),
  label: z.string(),
  ok: z.boolean(),
  /** What was found, in a sentence. */
  detail: z.string(),
  open: z.array(z.string()),
});
export type ChecklistItem = z.infer<typeof checklistItemSchema>;

/** Computed by the server from the register, the questions and the fits; never sent by a client. */
export const approvalChecklistSchema = z.object({
  /** The latest frozen version it looked at (null when none is frozen). */
  version: z.number().nullable(),
  items: z.array(checklistItemSchema),
  /** Every item holds. */
  ready: z.boolean(),
  computedAt: z.string(),
});
export type ApprovalChecklist = z.infer<typeof approvalChecklistSchema>;

/** A shape effect whose nominal changed since it was uploaded, as the freeze form lists it. */
export const staleEffectSchema = z.object({
  effectId: z.number(),
  entry: z.string(),
  region: z.string(),
  process: z.string(),
  since: z.string(),
  /** 1-based bins where the nominal now differs from the one the variation was made against. */
  bins: z.array(z.number()),
});
export type StaleEffect = z.infer<typeof staleEffectSchema>;
