import { useState } from 'react';
import type { Model } from '@shared/schemas/api';
import { Badge } from '../../../components/ui/badge';
import { Panel } from '../../../components/ui/page';
import { ROLE_MEANING, ROLE_TONE } from './region-roles';
import { PrefitChart } from './prefit-chart';

/** One region's nominal templates stacked by process, the region chosen from a row of buttons. */
export function PrefitPanel({ model }: { model: Model }) {
  const [chosen, setChosen] = useState(model.regions[0]?.key);
  const region = model.regions.find((r) => r.key === chosen) ?? model.regions[0];
  if (!region) return null;
  return (
    <Panel title="Pre-fit view">
      <div className="mb-3 flex flex-wrap gap-1.5" role="group" aria-label="Region shown">
        {model.regions.map((r) => (
          <button
            key={r.key}
            type="button"
            aria-pressed={r.key === region.key}
            onClick={() => setChosen(r.key)}
            className={`rounded-md border px-2.5 py-1 text-xs font-medium ${r.key === region.key ? 'border-teal bg-teal-soft text-teal-ink' : 'border-rule-strong bg-paper-raised text-ink-soft hover:bg-paper-sunk'}`}
          >
            {r.label || r.key}
            <span className="ml-1.5 font-mono text-2xs text-ink-muted">{r.key}</span>
          </button>
        ))}
      </div>
      <div className="flex flex-wrap items-center gap-2 pb-2">
        <h3 className="text-sm font-semibold">{region.label || region.key}</h3>
        <Badge tone={ROLE_TONE[region.role]} title={ROLE_MEANING[region.role]}>
          {region.role}
        </Badge>
        <span className="text-xs text-ink-muted">Nominal templates stacked by process; hover a bin for its numbers.</span>
      </div>
      <PrefitChart model={model} region={region} />
    </Panel>
  );
}
