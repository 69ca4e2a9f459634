import type { QuestionFilter } from '@shared/schemas/review';
import { questionStateSchema } from '@shared/schemas/review';
import { SelectField } from '../../../components/ui/field';
import { QUESTION_STATE_META, QUESTION_STATES } from '../question-states';

/** The filter named by the URL's search parameters; anything malformed is ignored. */
export function filterFromParams(params: URLSearchParams): QuestionFilter {
  const f: QuestionFilter = {};
  const state = questionStateSchema.safeParse(params.get('state'));
  if (state.success) f.state = state.data;
  const owner = Number(params.get('owner'));
  if (Number.isInteger(owner) && owner > 0) f.owner = owner;
  const fit = Number(params.get('fit'));
  if (Number.isInteger(fit) && fit > 0) f.fit = fit;
  const group = params.get('group');
  if (group) f.group = group;
  const entry = params.get('entry');
  if (entry) f.entry = entry;
  return f;
}

type Choice = { value: string; label: string };

function Select({ label, value, choices, onChange }: { label: string; value: string; choices: Choice[]; onChange: (v: string) => void }) {
  return (
    <SelectField label={label} value={value} onChange={(e) => onChange(e.target.value)} className="max-w-56">
      <option value="">Any</option>
      {choices.map((c) => (
        <option key={c.value} value={c.value}>
          {c.label}
        </option>
      ))}
    </SelectField>
  );
}

/** State, owner, group and fit; each change is written to the URL by the caller. */
export function QuestionFilters({
  filter,
  owners,
  groups,
  fits,
  onChange,
}: {
  filter: QuestionFilter;
  owners: Choice[];
  groups: string[];
  fits: Choice[];
  onChange: (key: keyof QuestionFilter, value: string) => void;
}) {
  return (
    <div className="flex flex-wrap items-end gap-3" role="group" aria-label="Filters">
      <Select label="State" value={filter.state ?? ''} choices={QUESTION_STATES.map((s) => ({ value: s, label: QUESTION_STATE_META[s].label }))} onChange={(v) => onChange('state', v)} />
      <Select label="Owner" value={filter.owner ? String(filter.owner) : ''} choices={owners} onChange={(v) => onChange('owner', v)} />
      <Select label="Group" value={filter.group ?? ''} choices={groups.map((g) => ({ value: g, label: g }))} onChange={(v) => onChange('group', v)} />
      <Select label="Fit" value={filter.fit ? String(filter.fit) : ''} choices={fits} onChange={(v) => onChange('fit', v)} />
      {filter.entry && (
        <button type="button" onClick={() => onChange('entry', '')} className="mb-1 rounded-full border border-rule-strong bg-paper-raised px-2 py-0.5 text-xs" aria-label={`Remove the parameter filter ${filter.entry}`}>
          parameter <span className="font-mono">{filter.entry}</span> ✕
        </button>
      )}
    </div>
  );
}
