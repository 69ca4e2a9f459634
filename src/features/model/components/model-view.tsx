import type { Model, Region } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { Badge } from '../../../components/ui/badge';
import { Panel, tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatCount, formatEdge } from '../../../lib/format';
import { processColour } from '../../../lib/palette';

const ROLE_TONE = { signal: 'plum', control: 'teal', validation: 'neutral' } as const;
const ROLE_MEANING = {
  signal: 'Signal region: where the signal is expected; its data are withheld while the analysis is blinded',
  control: 'Control region: constrains backgrounds and nuisance parameters',
  validation: 'Validation region: checks the model; not used to constrain it',
} as const;

function Binning({ region }: { region: Region }) {
  const e = region.edges;
  const n = Math.max(0, e.length - 1);
  if (n === 0) return <span className="text-ink-muted">no bins</span>;
  const unit = region.unit ? ` ${region.unit}` : '';
  const widths = e.slice(1).map((x, i) => x - e[i]);
  const uniform = widths.every((w) => Math.abs(w - widths[0]) < 1e-9 * Math.max(1, Math.abs(widths[0])));
  return (
    <span title={`Bin edges${unit ? ` (${region.unit})` : ''}: ${e.map(formatEdge).join(', ')}`} className="tabular-nums">
      {n} bins, {formatEdge(e[0])}–{formatEdge(e[n])}
      {unit}
      <span className="text-ink-muted">{uniform ? `, width ${formatEdge(widths[0])}${unit}` : ', variable width'}</span>
    </span>
  );
}

function Observed({ region }: { region: Region }) {
  if (region.withheld)
    return (
      <Badge tone="amber" title="The analysis is blinded: the server does not send signal-region observed counts to any client">
        data withheld while blinded
      </Badge>
    );
  if (!region.observed) return <span className="text-ink-muted">not recorded</span>;
  const total = region.observed.reduce((s, x) => s + x, 0);
  return (
    <span className="tabular-nums" title={`Observed events per bin: ${region.observed.map(formatCount).join(', ')}`}>
      {formatCount(total)} events
    </span>
  );
}

/** Sum of the nominal templates in a region: the pre-fit expected event count. */
function expectedTotal(model: Model, region: string): number | null {
  const ts = model.templates.filter((t) => t.region === region);
  if (ts.length === 0) return null;
  return ts.reduce((s, t) => s + t.nominal.reduce((a, b) => a + b, 0), 0);
}

export function ModelView({ model }: { model: Model }) {
  if (model.regions.length === 0 && model.processes.length === 0)
    return (
      <EmptyState title="The model is empty">
        <p>Regions with their binning, the processes and their nominal templates will be listed here once an analyst defines them.</p>
      </EmptyState>
    );

  const normByKey = new Map(model.floatingNorms.map((f) => [f.key, f]));
  const normOfProcess = new Map<string, string>();
  for (const t of model.templates) if (t.floatingNorm) normOfProcess.set(t.process, t.floatingNorm);

  return (
    <div className="flex flex-col gap-5">
      <Panel title={`Regions (${model.regions.length})`}>
        <div className="-mx-4 -my-3 overflow-x-auto">
          <table className={tableClass} aria-label="Regions">
            <thead>
              <tr>
                <th scope="col" className={thClass}>Region</th>
                <th scope="col" className={thClass}>Role</th>
                <th scope="col" className={thClass}>Observable</th>
                <th scope="col" className={thClass}>Unit</th>
                <th scope="col" className={thClass}>Binning</th>
                <th scope="col" className={`${thClass} text-right whitespace-nowrap`}>Expected (pre-fit)</th>
                <th scope="col" className={`${thClass} text-right`}>Observed</th>
              </tr>
            </thead>
            <tbody>
              {model.regions.map((r) => {
                const exp = expectedTotal(model, r.key);
                return (
                  <tr key={r.key}>
                    <th scope="row" className={`${tdClass} text-left font-normal`}>
                      <span className="font-medium">{r.label}</span>
                      <span className="ml-2 font-mono text-xs text-ink-muted">{r.key}</span>
                    </th>
                    <td className={tdClass}>
                      <Badge tone={ROLE_TONE[r.role]} title={ROLE_MEANING[r.role]}>
                        {r.role}
                      </Badge>
                    </td>
                    <td className={`${tdClass} whitespace-nowrap`}>{r.observable}</td>
                    <td className={`${tdClass} whitespace-nowrap`}>{r.unit || <span className="text-ink-muted" title="Dimensionless observable">none</span>}</td>
                    <td className={tdClass}>
                      <Binning region={r} />
                    </td>
                    <td className={`${tdClass} text-right whitespace-nowrap tabular-nums`} title="Sum of the nominal templates of every process in this region, before the fit">
                      {exp === null ? <span className="text-ink-muted">no templates</span> : `${formatCount(Math.round(exp * 10) / 10)} events`}
                    </td>
                    <td className={`${tdClass} text-right whitespace-nowrap`}>
                      <Observed region={r} />
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      </Panel>

      <Panel title={`Processes (${model.processes.length})`}>
        <div className="-mx-4 -my-3 overflow-x-auto">
          <table className={tableClass} aria-label="Processes">
            <thead>
              <tr>
                <th scope="col" className={thClass}>Process</th>
                <th scope="col" className={thClass}>Kind</th>
                <th scope="col" className={thClass}>Floating normalisation</th>
                <th scope="col" className={thClass}>Templates</th>
              </tr>
            </thead>
            <tbody>
              {model.processes.map((p, i) => {
                const norm = normOfProcess.get(p.key);
                const f = norm ? normByKey.get(norm) : undefined;
                const regions = model.templates.filter((t) => t.process === p.key).map((t) => t.region);
                return (
                  <tr key={p.key}>
                    <th scope="row" className={`${tdClass} text-left font-normal`}>
                      <span className="inline-flex items-center gap-2">
                        <span aria-hidden className="inline-block size-3 rounded-sm border border-ink/15" style={{ background: processColour(i, p.colour) }} />
                        <span className="font-medium">{p.label}</span>
                        <span className="font-mono text-xs text-ink-muted">{p.key}</span>
                      </span>
                    </th>
                    <td className={tdClass}>
                      <Badge tone={p.kind === 'signal' ? 'plum' : 'neutral'}>{p.kind}</Badge>
                    </td>
                    <td className={tdClass}>
                      {f ? (
                        <span title={`Normalisation factor fitted freely: starts at ${f.start}, allowed range [${f.min}, ${f.max}]`}>
                          {f.label} <span className="text-ink-muted tabular-nums">[{f.min}, {f.max}]</span>
                        </span>
                      ) : norm ? (
                        norm
                      ) : (
                        <span className="text-ink-muted">fixed</span>
                      )}
                    </td>
                    <td className={tdClass} title="Regions in which this process has a nominal template">
                      {regions.length ? `${regions.length} region${regions.length === 1 ? '' : 's'}: ${regions.join(', ')}` : <span className="text-ink-muted">none</span>}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      </Panel>

      <EmptyState title="Stacked pre-fit distributions" notBuilt>
        <p>Per region, the nominal templates stacked by process with the observed data and a ratio panel will be drawn here. Editing regions, processes and templates, and uploading data, arrive with it.</p>
      </EmptyState>
    </div>
  );
}
