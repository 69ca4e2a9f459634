import { MEMBER_ROLES } from './permissions';

/**
 * Every value set of the product, written once: the database enums (server/db/schema.ts), the
 * zod schemas of the API and the exchange file, and the screens all read these.
 */
export { MEMBER_ROLES };
export const REGION_ROLES = ['signal', 'control', 'validation'] as const;
export const PROCESS_KINDS = ['signal', 'background'] as const;
export const EFFECT_KINDS = ['scale', 'shape'] as const;
export const ENTRY_STATES = ['draft', 'submitted', 'accepted', 'sent_back', 'retired'] as const;
export const BLINDING_STATES = ['blinded', 'unblinding_requested', 'unblinded'] as const;
export const FIT_STATES = ['queued', 'running', 'succeeded', 'failed', 'cancelled'] as const;
export const QUESTION_STATES = ['open', 'answered', 'resolved'] as const;

export type RegionRole = (typeof REGION_ROLES)[number];
export type ProcessKind = (typeof PROCESS_KINDS)[number];
export type EffectKind = (typeof EFFECT_KINDS)[number];
