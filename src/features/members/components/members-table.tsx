import { useMemo } from 'react';
import type { Member } from '@shared/schemas/api';
import { MEMBER_ROLES, ROLE_LABELS, type MemberRole } from '@shared/permissions';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { FormError } from '../../../components/ui/error-notice';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
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

const col = dataColumns<Member>();

function makeColumns(slug: string, canManage: boolean, myUserId: number | undefined) {
  return col.columns([
    col.accessor('name', {
      header: 'Name',
      meta: { cellClass: 'font-medium' },
      cell: (c) => (
        <>
          {c.getValue()}
          {c.row.original.userId === myUserId && <span className="ml-1.5 text-xs font-normal text-ink-muted">(you)</span>}
        </>
      ),
    }),
    col.accessor('email', { header: 'E-mail' }),
    col.accessor('role', { header: 'Role', cell: (c) => (canManage ? <RoleSelect slug={slug} member={c.row.original} /> : ROLE_LABELS[c.getValue()]) }),
    col.accessor('since', { header: 'Member since', cell: (c) => formatDate(c.getValue()) }),
    ...(canManage
      ? [col.display({ id: 'actions', header: 'Actions', meta: { srOnlyHeader: true, headerClass: 'text-right', cellClass: 'text-right' }, cell: (c) => <RemoveButton slug={slug} member={c.row.original} /> })]
      : []),
  ]);
}

export function MembersTable({ slug, members, canManage, myUserId }: { slug: string; members: Member[]; canManage: boolean; myUserId?: number }) {
  const sorted = useMemo(() => [...members].sort((a, b) => ROLE_ORDER[a.role] - ROLE_ORDER[b.role] || a.name.localeCompare(b.name)), [members]);
  const columns = useMemo(() => makeColumns(slug, canManage, myUserId), [slug, canManage, myUserId]);
  return (
    <DataTable columns={columns} data={sorted} getRowId={(m) => String(m.userId)} label="Members" rowHeader="name" empty="Nobody has a role in this analysis yet." />
  );
}
