import type { User } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';

export function UsersTable({ users }: { users: User[] }) {
  const sorted = [...users].sort((a, b) => a.name.localeCompare(b.name));
  return (
    <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
      <table className={tableClass} aria-label="Accounts">
        <thead>
          <tr>
            <th scope="col" className={thClass}>Name</th>
            <th scope="col" className={thClass}>E-mail</th>
            <th scope="col" className={thClass}>Admin</th>
          </tr>
        </thead>
        <tbody>
          {sorted.map((u) => (
            <tr key={u.id}>
              <th scope="row" className={`${tdClass} text-left font-medium`}>{u.name}</th>
              <td className={tdClass}>{u.email}</td>
              <td className={tdClass}>
                {u.isAdmin ? (
                  <Badge tone="ink" title="Manages accounts, analyses and memberships; reads the outbox">
                    admin
                  </Badge>
                ) : (
                  <span className="text-ink-muted">no</span>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
