/**
 * Who may do what, per analysis. The server enforces this table on every request
 * (server/auth/authorize.ts); the client reads the same table only to hide controls.
 */
export const MEMBER_ROLES = ['convener', 'analyst', 'contact', 'reader'] as const;
export type MemberRole = (typeof MEMBER_ROLES)[number];

export const ROLE_LABELS: Record<MemberRole, string> = {
  convener: 'Convener',
  analyst: 'Analyst',
  contact: 'Systematics contact',
  reader: 'Reader',
};

export const ACTIONS = [
  'analysis.read',
  'members.manage',
  'model.edit',
  'entry.create',
  'entry.edit',
  'entry.editOwn',
  'entry.review',
  'variation.upload',
  'groups.edit',
  'version.freeze',
  'version.approve',
  'fit.run',
  'question.raise',
  'question.answer',
  'question.resolve',
  'blinding.request',
  'blinding.decide',
] as const;
export type Action = (typeof ACTIONS)[number];

/** Every member reads, and asks and answers questions: review committees read, and ask. */
const everyone: Action[] = ['analysis.read', 'question.raise', 'question.answer'];

export const ROLE_ACTIONS: Record<MemberRole, readonly Action[]> = {
  convener: [...everyone, 'members.manage', 'entry.review', 'version.freeze', 'version.approve', 'question.resolve', 'blinding.decide'],
  analyst: [
    ...everyone,
    'model.edit',
    'entry.create',
    'entry.edit',
    'entry.editOwn',
    'variation.upload',
    'groups.edit',
    'version.freeze',
    'fit.run',
    'blinding.request',
  ],
  contact: [...everyone, 'entry.editOwn', 'variation.upload'],
  reader: [...everyone],
};

/** Admins manage accounts, analyses and memberships, and can read every analysis. */
export const ADMIN_ACTIONS: readonly Action[] = ['analysis.read', 'members.manage'];

export function allowedActions(role: MemberRole | null, isAdmin: boolean): Action[] {
  const set = new Set<Action>(role ? ROLE_ACTIONS[role] : []);
  if (isAdmin) ADMIN_ACTIONS.forEach((a) => set.add(a));
  return ACTIONS.filter((a) => set.has(a));
}

export function can(role: MemberRole | null, isAdmin: boolean, action: Action): boolean {
  return (role !== null && ROLE_ACTIONS[role].includes(action)) || (isAdmin && ADMIN_ACTIONS.includes(action));
}
