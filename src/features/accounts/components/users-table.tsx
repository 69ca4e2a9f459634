import { useMemo } from 'react';
import type { User } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { DataTable, dataColumns } from '../../../components/ui/data-table';

const col = dataColumns<User>();

const columns = col.columns([
  col.accessor('name', { header: 'Name', meta: { cellClass: 'font-medium' } }),
  col.accessor('email', { header: 'E-mail' }),
  col.accessor('isAdmin', {
    header: 'Admin',
    cell: (c) =>
      c.getValue() ? (
        <Badge tone="ink" title="Manages accounts, analyses and memberships; reads the outbox">
          admin
        </Badge>
      ) : (
        <span className="text-ink-muted">no</span>
      ),
  }),
]);

export function UsersTable({ users }: { users: User[] }) {
  const sorted = useMemo(() => [...users].sort((a, b) => a.name.localeCompare(b.name)), [users]);
  return <DataTable columns={columns} data={sorted} getRowId={(u) => String(u.id)} label="Accounts" rowHeader="name" />;
}
