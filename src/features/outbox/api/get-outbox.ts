import { queryOptions, useQuery } from '@tanstack/react-query';
import type { OutboxMessage } from '@shared/schemas/register';
import { api } from '../../../lib/api-client';
import { queryKeys } from '../../../lib/query-keys';

export type { OutboxMessage };

export function getOutbox(): Promise<OutboxMessage[]> {
  return api.get<OutboxMessage[]>('/api/outbox');
}

export const outboxQueryOptions = () => queryOptions({ queryKey: queryKeys.outbox, queryFn: getOutbox });

export function useOutbox() {
  return useQuery(outboxQueryOptions());
}
