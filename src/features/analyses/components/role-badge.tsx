import { ROLE_LABELS, type MemberRole } from '@shared/permissions';
import { Badge } from '../../../components/ui/badge';

export function RoleBadge({ role, isAdmin = false }: { role: MemberRole | null; isAdmin?: boolean }) {
  if (role) return <Badge title="Your role in this analysis">{ROLE_LABELS[role]}</Badge>;
  if (isAdmin)
    return (
      <Badge tone="ink" title="You are not a member; as an admin you may read it and manage its members">
        Admin
      </Badge>
    );
  return null;
}
