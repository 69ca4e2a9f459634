import { useParams } from 'react-router';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useMe } from '../../../features/auth/api/get-me';
import { useCan } from '../../../features/analyses/use-can';
import { useMembers } from '../../../features/members/api/get-members';
import { InviteMemberForm } from '../../../features/members/components/invite-member-form';
import { MembersTable } from '../../../features/members/components/members-table';

export function MembersRoute() {
  const { slug = '' } = useParams();
  const members = useMembers(slug);
  const canManage = useCan(slug)('members.manage');
  const me = useMe();
  return (
    <>
      <PageHeader
        title="Members"
        description={canManage ? 'Who works on this analysis and in which role. You may invite people by e-mail, change roles and remove members.' : 'Who works on this analysis and in which role.'}
      />
      <div className="flex flex-col gap-5">
        {canManage && (
          <Panel title="Invite by e-mail">
            <InviteMemberForm slug={slug} />
          </Panel>
        )}
        <QueryView query={members} loadingLabel="Loading members…">
          {(list) => <MembersTable slug={slug} members={list} canManage={canManage} myUserId={me.data?.user.id} />}
        </QueryView>
      </div>
    </>
  );
}
