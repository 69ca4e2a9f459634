import { SelectField } from '../../../components/ui/field';
import { groupName } from '../../../lib/fits';

/** The groups present among some parameters, alphabetically, "(no group)" last. */
export function groupsOf(list: { group: string | null }[]): string[] {
  const set = new Set(list.map((n) => groupName(n.group)));
  return [...set].sort((a, b) => (a.startsWith('(') ? 1 : b.startsWith('(') ? -1 : a.localeCompare(b)));
}

const ALL = '\u0000all';

export function GroupFilter({ groups, value, onChange }: { groups: string[]; value: string | null; onChange: (g: string | null) => void }) {
  return (
    <SelectField label="Group" value={value ?? ALL} onChange={(e) => onChange(e.target.value === ALL ? null : e.target.value)} className="max-w-56">
      <option value={ALL}>All groups</option>
      {groups.map((g) => (
        <option key={g} value={g}>
          {g}
        </option>
      ))}
    </SelectField>
  );
}
