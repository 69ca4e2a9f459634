import type { Member } from '@shared/schemas/api';
import { MEMBER_ROLES, ROLE_LABELS, type MemberRole } from '@shared/permissions';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { FormError } from '../../../components/ui/error-notice';
import { tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatDate } from '../../../lib/format';
import { useRemoveMember } from '../api/remove-member';
import { useUpdateMember } from '../api/update-member';

const ROLE_ORDER: Record<MemberRole, number> = { convener: 0, analyst: 1, contact: 2, reader: 3 };

function RoleSelect({ slug, member }: { slug: string; member: Member }) {
  const update = useUpdateMember(slug);
  return (
    <div className="flex flex-col gap-1">
      <select
        aria-label={`Role of ${member.name}`}
        value={member.role}
        disabled={update.isPending}
        onChange={(e) => update.mutate({ userId: member.userId, role: e.target.value as MemberRole })}
        className="w-44 rounded-md border border-rule-strong bg-paper-raised px-2 py-1 text-sm"
      >
        {MEMBER_ROLES.map((r) => (
          <option key={r} value={r}>
            {ROLE_LABELS[r]}
          </option>
        ))}
      </select>
      {update.error && <FormError error={update.error} />}
    </div>
  );
}

function RemoveButton({ slug, member }: { slug: string; member: Member }) {
  const remove = useRemoveMember(slug);
  return (
    <ConfirmButton
      label="Remove"
      ariaLabel={`Remove ${member.name}`}
      question={`Remove ${member.name}?`}
      confirmLabel="Confirm removal"
      busy={remove.isPending}
      error={remove.error}
      onCancel={remove.reset}
      onConfirm={() => remove.mutate(member.userId)}
    />
  );
}

export function MembersTable({ slug, members, canManage, myUserId }: { slug: string; members: Member[]; canManage: boolean; myUserId?: number }) {
  const sorted = [...members].sort((a, b) => ROLE_ORDER[a.role] - ROLE_ORDER[b.role] || a.name.localeCompare(b.name));
  return (
    <div className="overflow-x-auto rounded-lg border border-rule bg-paper-raised">
      <table className={tableClass} aria-label="Members">
        <thead>
          <tr>
            <th scope="col" className={thClass}>Name</th>
            <th scope="col" className={thClass}>E-mail</th>
            <th scope="col" className={thClass}>Role</th>
            <th scope="col" className={thClass}>Member since</th>
            {canManage && (
              <th scope="col" className={`${thClass} text-right`}>
                <span className="sr-only">Actions</span>
              </th>
            )}
          </tr>
        </thead>
        <tbody>
          {sorted.map((m) => (
            <tr key={m.userId}>
              <th scope="row" className={`${tdClass} text-left font-medium`}>
                {m.name}
                {m.userId === myUserId && <span className="ml-1.5 text-xs font-normal text-ink-muted">(you)</span>}
              </th>
              <td className={tdClass}>{m.email}</td>
              <td className={tdClass}>{canManage ? <RoleSelect slug={slug} member={m} /> : ROLE_LABELS[m.role]}</td>
              <td className={tdClass}>{formatDate(m.since)}</td>
              {canManage && (
                <td className={`${tdClass} text-right`}>
                  <RemoveButton slug={slug} member={m} />
                </td>
              )}
            </tr>
          ))}
          {sorted.length === 0 && (
            <tr>
              <td colSpan={canManage ? 5 : 4} className={`${tdClass} py-6 text-center text-ink-muted`}>
                Nobody has a role in this analysis yet.
              </td>
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}
