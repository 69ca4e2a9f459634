import { groupName } from '../result-helpers';

/** The groups present among some parameters, alphabetically, "(no group)" last. */
export function groupsOf(list: { group: string | null }[]): string[] {
  const set = new Set(list.map((n) => groupName(n.group)));
  return [...set].sort((a, b) => (a.startsWith('(') ? 1 : b.startsWith('(') ? -1 : a.localeCompare(b)));
}

const ALL = '\u0000all';

export function GroupFilter({ id, groups, value, onChange }: { id: string; groups: string[]; value: string | null; onChange: (g: string | null) => void }) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-xs font-semibold text-ink-soft">
        Group
      </label>
      <select id={id} value={value ?? ALL} onChange={(e) => onChange(e.target.value === ALL ? null : e.target.value)} className="max-w-56 rounded-md border border-rule-strong bg-paper-raised px-2 py-1.5 text-sm">
        <option value={ALL}>All groups</option>
        {groups.map((g) => (
          <option key={g} value={g}>
            {g}
          </option>
        ))}
      </select>
    </div>
  );
}
