import { useId, type ReactNode } from 'react';
import { Button } from '../../../components/ui/button';
import { CheckboxField, SelectField } from '../../../components/ui/field';
import { issueAt } from '../../../lib/form-issues';
import { EXPECTED_BASIS } from '../../../lib/fits';
import type { DraftProblems, VariantDraft } from '../variant-draft';

/** What the form may suggest: names from the analysis's current model and register (a version may differ; the server checks). */
export type FitChoices = {
  /** μ, the floating normalisations and the systematics, by key */
  parameters: string[];
  systematics: string[];
  groups: string[];
  regions: { key: string; label: string; role: string }[];
  /** the parameters of interest the model declares besides μ (none: μ is the only one) */
  pois?: { key: string; label: string }[];
};

const input =
  'block w-full rounded-md border bg-paper-raised px-2 py-1 text-sm text-ink placeholder:text-ink-muted/70 focus-visible:outline-2 focus-visible:outline-teal';

/** A field's message under it: the local check's first, else the server's. */
function Message({ id, text }: { id: string; text: string | undefined }) {
  if (!text) return null;
  return (
    <p id={id} className="text-xs font-medium text-danger">
      {text}
    </p>
  );
}

function Group({ legend, hint, children }: { legend: string; hint?: ReactNode; children: ReactNode }) {
  return (
    <fieldset className="flex flex-col gap-1.5 border-t border-rule pt-2">
      <legend className="text-xs font-semibold text-ink">{legend}</legend>
      {hint && <p className="text-xs text-ink-muted">{hint}</p>}
      {children}
    </fieldset>
  );
}

function HeldRows({ draft, set, problems, error, listId }: { draft: VariantDraft; set: (d: Partial<VariantDraft>) => void; problems: DraftProblems; error: unknown; listId: string }) {
  const base = useId();
  const update = (i: number, patch: Partial<VariantDraft['hold'][number]>) => set({ hold: draft.hold.map((h, k) => (k === i ? { ...h, ...patch } : h)) });
  const whole = issueAt(error, ['options', 'hold'], true);
  return (
    <Group legend="Hold parameters" hint="Each at a value, or at its best fit to the same data. A held parameter leaves the covariance, the impacts and the ranking.">
      {draft.hold.map((h, i) => {
        const id = `${base}-${i}`;
        const nameMsg = problems[`hold.${i}.parameter`] ?? issueAt(error, ['options', 'hold', i, 'parameter']);
        const valueMsg = problems[`hold.${i}.value`] ?? issueAt(error, ['options', 'hold', i, 'value']);
        return (
          <div key={i} className="flex flex-col gap-1 rounded-md bg-paper-sunk/60 px-2 py-1.5">
            <div className="flex flex-wrap items-end gap-2">
              <div className="min-w-32 flex-1">
                <label htmlFor={`${id}-p`} className="text-2xs font-semibold text-ink-soft">
                  Parameter held ({i + 1})
                </label>
                <input
                  id={`${id}-p`}
                  list={listId}
                  value={h.parameter}
                  onChange={(e) => update(i, { parameter: e.target.value })}
                  className={`${input} font-mono ${nameMsg ? 'border-danger' : 'border-rule-strong'}`}
                  aria-invalid={nameMsg ? true : undefined}
                  aria-describedby={nameMsg ? `${id}-pm` : undefined}
                  placeholder="mu, a normalisation or a systematic"
                />
              </div>
              <div>
                <label htmlFor={`${id}-a`} className="text-2xs font-semibold text-ink-soft">
                  Held at
                </label>
                <select id={`${id}-a`} value={h.at} onChange={(e) => update(i, { at: e.target.value as 'best' | 'value' })} className={`${input} border-rule-strong`}>
                  <option value="best">its best fit</option>
                  <option value="value">a value</option>
                </select>
              </div>
              {h.at === 'value' && (
                <div className="w-20">
                  <label htmlFor={`${id}-v`} className="text-2xs font-semibold text-ink-soft">
                    Value
                  </label>
                  <input
                    id={`${id}-v`}
                    type="number"
                    step="any"
                    value={h.value}
                    onChange={(e) => update(i, { value: e.target.value })}
                    className={`${input} tabular-nums ${valueMsg ? 'border-danger' : 'border-rule-strong'}`}
                    aria-invalid={valueMsg ? true : undefined}
                    aria-describedby={valueMsg ? `${id}-vm` : undefined}
                  />
                </div>
              )}
              <Button size="sm" variant="ghost" onClick={() => set({ hold: draft.hold.filter((_, k) => k !== i) })} aria-label={`Remove held parameter ${i + 1}`}>
                Remove
              </Button>
            </div>
            <Message id={`${id}-pm`} text={nameMsg} />
            <Message id={`${id}-vm`} text={valueMsg} />
          </div>
        );
      })}
      <Message id={`${base}-all`} text={whole} />
      <div>
        <Button size="sm" onClick={() => set({ hold: [...draft.hold, { parameter: '', at: 'best', value: '0' }] })}>
          Hold a parameter
        </Button>
      </div>
    </Group>
  );
}

function SplitRows({ draft, set, problems, error, listId }: { draft: VariantDraft; set: (d: Partial<VariantDraft>) => void; problems: DraftProblems; error: unknown; listId: string }) {
  const base = useId();
  const update = (i: number, patch: Partial<VariantDraft['decorrelate'][number]>) => set({ decorrelate: draft.decorrelate.map((d, k) => (k === i ? { ...d, ...patch } : d)) });
  return (
    <Group
      legend="Decorrelate a systematic"
      hint="Split it into independent parts, one per region (or process) it affects. The result gives each part's best fit and the χ² of their agreement: a large χ² says one region's constraint was being carried into another."
    >
      {draft.decorrelate.map((d, i) => {
        const id = `${base}-${i}`;
        const msg = problems[`decorrelate.${i}.parameter`] ?? issueAt(error, ['options', 'decorrelate', i]);
        return (
          <div key={i} className="flex flex-col gap-1 rounded-md bg-paper-sunk/60 px-2 py-1.5">
            <div className="flex flex-wrap items-end gap-2">
              <div className="min-w-32 flex-1">
                <label htmlFor={`${id}-p`} className="text-2xs font-semibold text-ink-soft">
                  Systematic split ({i + 1})
                </label>
                <input
                  id={`${id}-p`}
                  list={listId}
                  value={d.parameter}
                  onChange={(e) => update(i, { parameter: e.target.value })}
                  className={`${input} font-mono ${msg ? 'border-danger' : 'border-rule-strong'}`}
                  aria-invalid={msg ? true : undefined}
                  aria-describedby={msg ? `${id}-m` : undefined}
                />
              </div>
              <div>
                <label htmlFor={`${id}-b`} className="text-2xs font-semibold text-ink-soft">
                  By
                </label>
                <select id={`${id}-b`} value={d.by} onChange={(e) => update(i, { by: e.target.value as 'region' | 'process' })} className={`${input} border-rule-strong`}>
                  <option value="region">region</option>
                  <option value="process">process</option>
                </select>
              </div>
              <Button size="sm" variant="ghost" onClick={() => set({ decorrelate: draft.decorrelate.filter((_, k) => k !== i) })} aria-label={`Remove split systematic ${i + 1}`}>
                Remove
              </Button>
            </div>
            <Message id={`${id}-m`} text={msg} />
          </div>
        );
      })}
      <div>
        <Button size="sm" onClick={() => set({ decorrelate: [...draft.decorrelate, { parameter: '', by: 'region' }] })}>
          Split a systematic
        </Button>
      </div>
    </Group>
  );
}

function ExpectedBasis({ draft, set, blinded, error }: { draft: VariantDraft; set: (d: Partial<VariantDraft>) => void; blinded: boolean; error: unknown }) {
  const base = useId();
  const msg = issueAt(error, ['options', 'expectedFrom']);
  const choices = [
    { value: 'prefit', label: 'Pre-fit', hint: 'θ = 0, γ = 1, normalisations at their start.' },
    { value: 'control', label: 'Control regions', hint: 'The best fit of the control regions alone, μ held at 0.' },
    { value: 'background', label: 'Measured background', hint: blinded ? 'Only once the analysis is unblinded: it reads the signal regions.' : 'The best fit of all regions with μ held at 0.' },
  ] as const;
  return (
    <Group legend="Expected numbers built on" hint="The Asimov dataset of the expected significance and limit bands.">
      <div role="radiogroup" aria-label="Expected numbers built on" aria-describedby={msg ? `${base}-m` : undefined} className="flex flex-col gap-1">
        {choices.map((c) => (
          <label key={c.value} className={`flex items-start gap-2 text-sm ${blinded && c.value === 'background' ? 'text-ink-muted' : 'text-ink'}`} title={EXPECTED_BASIS[c.value]}>
            <input
              type="radio"
              name={`${base}-basis`}
              value={c.value}
              checked={draft.expectedFrom === c.value}
              disabled={blinded && c.value === 'background'}
              onChange={() => set({ expectedFrom: c.value })}
              className="mt-0.5 size-4 accent-teal"
            />
            <span>
              {c.label}
              <span className="block text-xs text-ink-muted">{c.hint}</span>
            </span>
          </label>
        ))}
      </div>
      <Message id={`${base}-m`} text={msg} />
    </Group>
  );
}

function ExcludedRegions({ draft, set, regions, error }: { draft: VariantDraft; set: (d: Partial<VariantDraft>) => void; regions: FitChoices['regions']; error: unknown }) {
  const base = useId();
  const msg = issueAt(error, ['options', 'excludeRegions']);
  if (regions.length === 0) return null;
  return (
    <Group legend="Leave regions out" hint="A region left out does not enter the likelihood at all.">
      <div className="flex flex-wrap gap-x-4 gap-y-1" aria-describedby={msg ? `${base}-m` : undefined}>
        {regions.map((r) => (
          <CheckboxField
            key={r.key}
            label={`${r.key} (${r.role})`}
            checked={draft.excludeRegions.includes(r.key)}
            onChange={(e) => set({ excludeRegions: e.target.checked ? [...draft.excludeRegions, r.key] : draft.excludeRegions.filter((k) => k !== r.key) })}
          />
        ))}
      </div>
      <Message id={`${base}-m`} text={msg} />
    </Group>
  );
}

/**
 * The variant of a fit (docs/likelihood.md §9): held parameters or a held group, statistics only,
 * no template statistics, decorrelation, the basis of expected numbers, hidden μ, the breakdown by
 * freezing, and regions left out. Each server refusal is shown beside the field it names.
 */
export function VariantFields({
  draft,
  onChange,
  choices,
  blinded,
  error,
  problems,
}: {
  draft: VariantDraft;
  onChange: (d: VariantDraft) => void;
  choices: FitChoices;
  blinded: boolean;
  error: unknown;
  problems: DraftProblems;
}) {
  const paramList = useId();
  const systList = useId();
  const set = (patch: Partial<VariantDraft>) => onChange({ ...draft, ...patch });
  const groupMsg = issueAt(error, ['options', 'holdGroups']);
  const hiddenMsg = issueAt(error, ['options', 'hiddenMu']);
  const statMsg = issueAt(error, ['options', 'statOnly']);
  return (
    <div className="flex flex-col gap-3">
      <datalist id={paramList}>
        {choices.parameters.map((p) => (
          <option key={p} value={p} />
        ))}
      </datalist>
      <datalist id={systList}>
        {choices.systematics.map((p) => (
          <option key={p} value={p} />
        ))}
      </datalist>
      <HeldRows draft={draft} set={set} problems={problems} error={error} listId={paramList} />
      <SelectField
        label="Hold a group"
        value={draft.holdGroup}
        onChange={(e) => set({ holdGroup: e.target.value })}
        error={groupMsg}
        hint="Every systematic of the group held at its best fit."
      >
        <option value="">No group held</option>
        {choices.groups.map((g) => (
          <option key={g} value={g}>
            {g}
          </option>
        ))}
      </SelectField>
      <div className="flex flex-col gap-1.5 border-t border-rule pt-2">
        <CheckboxField
          label="Statistics only"
          checked={draft.statOnly}
          onChange={(e) => set({ statOnly: e.target.checked })}
          hint="Every systematic and template-statistics parameter held at its best fit; μ and the normalisations free. Its scan gives the statistical interval."
        />
        {statMsg && <p className="text-xs font-medium text-danger">{statMsg}</p>}
        <CheckboxField
          label="Without template statistics"
          checked={!draft.templateStats}
          onChange={(e) => set({ templateStats: !e.target.checked })}
          hint="No γ parameters: the simulated templates are taken as exact."
        />
      </div>
      <SplitRows draft={draft} set={set} problems={problems} error={error} listId={systList} />
      <ExpectedBasis draft={draft} set={set} blinded={blinded} error={error} />
      <div className="flex flex-col gap-1.5 border-t border-rule pt-2">
        <CheckboxField
          label="Hide μ"
          checked={draft.hiddenMu}
          onChange={(e) => set({ hiddenMu: e.target.checked })}
          hint={
            blinded
              ? 'Fits observed data in every region, signal regions included, and sends back pulls, constraints and control-region numbers only: allowed while blinded.'
              : 'Fits observed data in every region and shows pulls and constraints only.'
          }
        />
        {hiddenMsg && <p className="text-xs font-medium text-danger">{hiddenMsg}</p>}
        <CheckboxField
          label="Breakdown by freezing"
          checked={draft.breakdown}
          onChange={(e) => set({ breakdown: e.target.checked })}
          hint="Refit with each group held at its best fit and rescan μ: the uncertainty each group adds, beside the covariance figure."
        />
      </div>
      <ExcludedRegions draft={draft} set={set} regions={choices.regions} error={error} />
    </div>
  );
}
