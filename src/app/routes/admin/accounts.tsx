import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useUsers } from '../../../features/accounts/api/get-users';
import { CreateUserForm } from '../../../features/accounts/components/create-user-form';
import { UsersTable } from '../../../features/accounts/components/users-table';

export function AccountsRoute() {
  const users = useUsers();
  return (
    <main id="main" className="mx-auto max-w-6xl px-6 py-6">
      <PageHeader title="Accounts" description="Everyone who can sign in to this Plumbline. Roles are given per analysis, on its Members page." />
      <div className="grid gap-6 lg:grid-cols-[1fr_20rem]">
        <div className="min-w-0 self-start">
          <QueryView query={users} loadingLabel="Loading accounts…">
            {(list) => <UsersTable users={list} />}
          </QueryView>
        </div>
        <Panel title="Create an account" className="self-start">
          <CreateUserForm />
        </Panel>
      </div>
    </main>
  );
}
