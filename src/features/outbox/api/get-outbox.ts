import { queryOptions, useQuery } from '@tanstack/react-query';
import { api } from '../../../lib/api-client';

/**
 * A message Plumbline has queued for sending. The outbox is empty until e-mail is built,
 * so the client reads only the fields every message will certainly carry, and only if present.
 */
export type OutboxMessage = { id?: number; to?: string; subject?: string; createdAt?: string; sentAt?: string | null };

export const outboxQueryKey = ['outbox'] as const;

export function getOutbox(): Promise<OutboxMessage[]> {
  return api.get<OutboxMessage[]>('/api/outbox');
}

export const outboxQueryOptions = () => queryOptions({ queryKey: outboxQueryKey, queryFn: getOutbox });

export function useOutbox() {
  return useQuery(outboxQueryOptions());
}
