import { queryOptions, useQuery } from '@tanstack/react-query';
import type { OutboxMessage } from '@shared/schemas/register';
import { api } from '../../../lib/api-client';

export type { OutboxMessage };

export const outboxQueryKey = ['outbox'] as const;

export function getOutbox(): Promise<OutboxMessage[]> {
  return api.get<OutboxMessage[]>('/api/outbox');
}

export const outboxQueryOptions = () => queryOptions({ queryKey: outboxQueryKey, queryFn: getOutbox });

export function useOutbox() {
  return useQuery(outboxQueryOptions());
}
