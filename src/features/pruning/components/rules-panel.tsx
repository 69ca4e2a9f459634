import { useState, type FormEvent } from 'react';
import type { PruningRules } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { Panel } from '../../../components/ui/page';
import { isApiRequestError } from '../../../lib/api-client';
import { useChangePruningRules } from '../api/change-rules';

function RulesInWords({ rules }: { rules: PruningRules }) {
  return (
    <ul className="flex list-disc flex-col gap-1 pl-4 text-sm text-ink-soft">
      <li>
        an effect that moves no bin by <span className="font-semibold text-ink tabular-nums">{rules.belowPct} %</span> or more of its nominal;
      </li>
      <li>
        a shape whose shift is flat within its noise: its χ² against a flat shift has <span className="font-semibold text-ink tabular-nums">p above {rules.shapeP}</span>.
      </li>
    </ul>
  );
}

function RulesForm({ slug, rules }: { slug: string; rules: PruningRules }) {
  const change = useChangePruningRules(slug);
  const [belowPct, setBelowPct] = useState(String(rules.belowPct));
  const [shapeP, setShapeP] = useState(String(rules.shapeP));
  const [saved, setSaved] = useState(false);
  const issue = (field: string) => (isApiRequestError(change.error) ? change.error.fieldMessage(field) : undefined);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    setSaved(false);
    // an empty or malformed field goes to the server as it is, which names it
    const number = (s: string) => (s.trim() === '' ? Number.NaN : Number(s));
    change.mutate(
      { belowPct: number(belowPct), shapeP: number(shapeP) },
      {
        onSuccess: (overview) => {
          setBelowPct(String(overview.rules.belowPct));
          setShapeP(String(overview.rules.shapeP));
          setSaved(true);
        },
      },
    );
  };
  const changed = belowPct !== String(rules.belowPct) || shapeP !== String(rules.shapeP);
  return (
    <form onSubmit={submit} className="flex flex-col gap-3" aria-label="Pruning rules">
      <div className="grid grid-cols-2 gap-3">
        <TextField label="Small: below (% in every bin)" inputMode="decimal" value={belowPct} onChange={(e) => (setBelowPct(e.target.value), setSaved(false))} error={issue('belowPct')} />
        <TextField label="Flat shape: p above" inputMode="decimal" value={shapeP} onChange={(e) => (setShapeP(e.target.value), setSaved(false))} error={issue('shapeP')} />
      </div>
      {change.error && !issue('belowPct') && !issue('shapeP') ? <FormError error={change.error} /> : null}
      <div className="flex items-center gap-3">
        <Button type="submit" size="sm" variant="secondary" busy={change.isPending} disabled={!changed}>
          Apply the rules
        </Button>
        {saved && (
          <span role="status" className="text-xs text-teal-ink">
            Applied: the candidates below follow the new rules.
          </span>
        )}
      </div>
    </form>
  );
}

/** The analysis's rules: editable by those who edit the model, read by everyone else. */
export function RulesPanel({ slug, rules, mayEdit }: { slug: string; rules: PruningRules; mayEdit: boolean }) {
  return (
    <Panel title="Rules">
      <p className="mb-2 text-xs text-ink-muted">The rules propose; nothing is pruned until someone prunes it with a comment.</p>
      <RulesInWords rules={rules} />
      {mayEdit ? (
        <div className="mt-3 border-t border-rule pt-3">
          <RulesForm slug={slug} rules={rules} />
        </div>
      ) : (
        <p className="mt-2 text-xs text-ink-muted">Analysts change the rules.</p>
      )}
    </Panel>
  );
}
