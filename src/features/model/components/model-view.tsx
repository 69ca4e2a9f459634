import { Fragment, useState, type ReactNode } from 'react';
import type { Model, Region } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { Panel, tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatCount, formatEdge, round1 } from '../../../lib/format';
import { sum } from '../../../lib/numbers';
import { processColour } from '../../../lib/palette';
import { useDeleteFloatingNorm } from '../api/delete-floating-norm';
import { useDeleteProcess } from '../api/delete-process';
import { useDeleteRegion } from '../api/delete-region';
import { ImportModel } from './exchange-actions';
import { FloatingNormForm } from './floating-norm-form';
import { ModelCsvUpload } from './model-csv-upload';
import { ObservedEditor } from './observed-editor';
import { PrefitChart } from './prefit-chart';
import { ProcessForm } from './process-form';
import { RegionForm } from './region-form';
import { TemplateEditor } from './template-editor';

const ROLE_TONE = { signal: 'plum', control: 'teal', validation: 'neutral' } as const;
const ROLE_MEANING = {
  signal: 'Signal region: where the signal is expected; its data are withheld while the analysis is blinded',
  control: 'Control region: constrains backgrounds and nuisance parameters',
  validation: 'Validation region: checks the model; not used to constrain it',
} as const;

/** Which editor is open; one at a time, beside what it edits. */
type Editor =
  | { kind: 'region-new' }
  | { kind: 'region'; key: string }
  | { kind: 'observed'; key: string }
  | { kind: 'process-new' }
  | { kind: 'process'; key: string }
  | { kind: 'norm-new' }
  | { kind: 'template'; region: string; process: string };

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
  return (
    <span className="tabular-nums" title={`Observed events per bin: ${region.observed.map(formatCount).join(', ')}`}>
      {formatCount(sum(region.observed))} events
    </span>
  );
}

function expectedTotal(model: Model, region: string): number | null {
  const ts = model.templates.filter((t) => t.region === region);
  return ts.length ? ts.reduce((s, t) => s + sum(t.nominal), 0) : null;
}

/** A row that holds an editor under the row it edits. */
function EditorRow({ colSpan, children }: { colSpan: number; children: ReactNode }) {
  return (
    <tr>
      <td colSpan={colSpan} className={`${tdClass} bg-paper-sunk/50 px-4 py-3`}>
        {children}
      </td>
    </tr>
  );
}

function DeleteRegion({ slug, region }: { slug: string; region: string }) {
  const del = useDeleteRegion(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete region ${region}`} question={`Delete region ${region} and its templates?`} confirmLabel="Delete region" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(region)} />;
}
function DeleteProcess({ slug, process }: { slug: string; process: string }) {
  const del = useDeleteProcess(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete process ${process}`} question={`Delete process ${process} and its templates?`} confirmLabel="Delete process" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(process)} />;
}
function DeleteNorm({ slug, norm }: { slug: string; norm: string }) {
  const del = useDeleteFloatingNorm(slug);
  return <ConfirmButton label="Delete" ariaLabel={`Delete floating normalisation ${norm}`} question={`Delete ${norm}? Its templates become fixed.`} confirmLabel="Delete" busy={del.isPending} error={del.error} onCancel={del.reset} onConfirm={() => del.mutate(norm)} />;
}

function PrefitPanel({ model }: { model: Model }) {
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

export function ModelView({ slug, model, canEdit }: { slug: string; model: Model; canEdit: boolean }) {
  const [editor, setEditor] = useState<Editor | null>(null);
  const [imported, setImported] = useState<string | null>(null);
  const close = () => setEditor(null);
  const isEmpty = model.regions.length === 0 && model.processes.length === 0;
  const is = (e: Editor) => JSON.stringify(e) === JSON.stringify(editor);

  if (isEmpty && !canEdit)
    return (
      <EmptyState title="The model is empty">
        <p>Regions with their binning, the processes and their nominal templates will be listed here once an analyst defines them.</p>
      </EmptyState>
    );

  const normOf = new Map(model.floatingNorms.map((f) => [f.key, f]));
  const templateOf = new Map(model.templates.map((t) => [`${t.region}|${t.process}`, t]));
  const regionCols = canEdit ? 8 : 7;
  const processCols = canEdit ? 5 : 4;

  return (
    <div className="flex flex-col gap-5">
      {isEmpty && canEdit && (
        <Panel title="Start the model">
          <ImportModel slug={slug} onImported={setImported} />
          <p className="mt-3 border-t border-rule pt-3 text-sm text-ink-soft">Or build it by hand: add regions and processes below, then their templates.</p>
        </Panel>
      )}

      {imported && !isEmpty && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {imported}
        </p>
      )}

      {model.regions.length > 0 && model.templates.length > 0 && <PrefitPanel model={model} />}

      <Panel
        title={`Regions (${model.regions.length})`}
        actions={
          canEdit && !is({ kind: 'region-new' }) ? (
            <Button size="sm" onClick={() => setEditor({ kind: 'region-new' })}>
              Add region
            </Button>
          ) : undefined
        }
      >
        {is({ kind: 'region-new' }) && (
          <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
            <RegionForm slug={slug} onDone={close} />
          </div>
        )}
        {model.regions.length === 0 ? (
          <p className="text-sm text-ink-muted">No regions yet.</p>
        ) : (
          <div className="-mx-4 -mb-3 overflow-x-auto">
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
                  {canEdit && (
                    <th scope="col" className={`${thClass} text-right`}>
                      <span className="sr-only">Actions</span>
                    </th>
                  )}
                </tr>
              </thead>
              <tbody>
                {model.regions.map((r) => {
                  const exp = expectedTotal(model, r.key);
                  return (
                    <Fragment key={r.key}>
                      <tr>
                        <th scope="row" className={`${tdClass} text-left font-normal`}>
                          {r.label ? (
                            <>
                              <span className="font-medium">{r.label}</span>
                              <span className="ml-2 font-mono text-xs text-ink-muted">{r.key}</span>
                            </>
                          ) : (
                            <span className="font-mono text-xs font-medium">{r.key}</span>
                          )}
                        </th>
                        <td className={tdClass}>
                          <Badge tone={ROLE_TONE[r.role]} title={ROLE_MEANING[r.role]}>
                            {r.role}
                          </Badge>
                        </td>
                        <td className={`${tdClass} whitespace-nowrap`}>{r.observable}</td>
                        <td className={`${tdClass} whitespace-nowrap`}>{r.unit || <span className="text-ink-muted" title="Dimensionless observable">none</span>}</td>
                        <td className={`${tdClass} min-w-48`}>
                          <Binning region={r} />
                        </td>
                        <td className={`${tdClass} text-right whitespace-nowrap tabular-nums`} title="Sum of the nominal templates of every process in this region, before the fit">
                          {exp === null ? <span className="text-ink-muted">no templates</span> : `${formatCount(round1(exp))} events`}
                        </td>
                        <td className={`${tdClass} text-right whitespace-nowrap`}>
                          <Observed region={r} />
                        </td>
                        {canEdit && (
                          <td className={`${tdClass} text-right`}>
                            <div className="flex items-start justify-end gap-1">
                              <Button size="sm" variant="ghost" aria-label={`Edit region ${r.key}`} onClick={() => setEditor({ kind: 'region', key: r.key })}>
                                Edit
                              </Button>
                              <Button size="sm" variant="ghost" aria-label={`Observed data of ${r.key}`} onClick={() => setEditor({ kind: 'observed', key: r.key })}>
                                Data
                              </Button>
                              <DeleteRegion slug={slug} region={r.key} />
                            </div>
                          </td>
                        )}
                      </tr>
                      {is({ kind: 'region', key: r.key }) && (
                        <EditorRow colSpan={regionCols}>
                          <RegionForm slug={slug} region={r} onDone={close} />
                        </EditorRow>
                      )}
                      {is({ kind: 'observed', key: r.key }) && (
                        <EditorRow colSpan={regionCols}>
                          <ObservedEditor slug={slug} region={r} onDone={close} />
                        </EditorRow>
                      )}
                    </Fragment>
                  );
                })}
              </tbody>
            </table>
          </div>
        )}
      </Panel>

      <Panel
        title={`Processes (${model.processes.length})`}
        actions={
          canEdit && !is({ kind: 'process-new' }) ? (
            <Button size="sm" onClick={() => setEditor({ kind: 'process-new' })}>
              Add process
            </Button>
          ) : undefined
        }
      >
        {is({ kind: 'process-new' }) && (
          <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
            <ProcessForm slug={slug} index={model.processes.length} onDone={close} />
          </div>
        )}
        {model.processes.length === 0 ? (
          <p className="text-sm text-ink-muted">No processes yet.</p>
        ) : (
          <div className="-mx-4 -mb-3 overflow-x-auto">
            <table className={tableClass} aria-label="Processes">
              <thead>
                <tr>
                  <th scope="col" className={thClass}>Process</th>
                  <th scope="col" className={thClass}>Kind</th>
                  <th scope="col" className={thClass}>Floating normalisation</th>
                  <th scope="col" className={thClass}>Templates</th>
                  {canEdit && (
                    <th scope="col" className={`${thClass} text-right`}>
                      <span className="sr-only">Actions</span>
                    </th>
                  )}
                </tr>
              </thead>
              <tbody>
                {model.processes.map((p, i) => {
                  const ts = model.templates.filter((t) => t.process === p.key);
                  const norms = [...new Set(ts.map((t) => t.floatingNorm).filter((n): n is string => !!n))];
                  return (
                    <Fragment key={p.key}>
                      <tr>
                        <th scope="row" className={`${tdClass} text-left font-normal`}>
                          <span className="inline-flex items-center gap-2">
                            <span aria-hidden className="inline-block size-3 rounded-sm border border-ink/15" style={{ background: processColour(i, p.colour) }} />
                            {p.label && <span className="font-medium">{p.label}</span>}
                            <span className={`font-mono text-xs ${p.label ? 'text-ink-muted' : 'font-medium'}`}>{p.key}</span>
                          </span>
                        </th>
                        <td className={tdClass}>
                          <Badge tone={p.kind === 'signal' ? 'plum' : 'neutral'} title={p.kind === 'signal' ? 'Scaled by the signal strength μ' : 'Background: not scaled by μ'}>
                            {p.kind}
                          </Badge>
                        </td>
                        <td className={tdClass}>
                          {norms.length ? (
                            norms.map((n) => {
                              const f = normOf.get(n);
                              return (
                                <span key={n} className="mr-2" title={f ? `Fitted freely: starts at ${f.start}, allowed range [${f.min}, ${f.max}]` : undefined}>
                                  {f?.label || n} {f && <span className="text-ink-muted tabular-nums">[{f.min}, {f.max}]</span>}
                                </span>
                              );
                            })
                          ) : (
                            <span className="text-ink-muted">fixed</span>
                          )}
                        </td>
                        <td className={tdClass} title="Regions in which this process has a nominal template">
                          {ts.length ? `${ts.length} region${ts.length === 1 ? '' : 's'}: ${ts.map((t) => t.region).join(', ')}` : <span className="text-ink-muted">none</span>}
                        </td>
                        {canEdit && (
                          <td className={`${tdClass} text-right`}>
                            <div className="flex items-start justify-end gap-1">
                              <Button size="sm" variant="ghost" aria-label={`Edit process ${p.key}`} onClick={() => setEditor({ kind: 'process', key: p.key })}>
                                Edit
                              </Button>
                              <DeleteProcess slug={slug} process={p.key} />
                            </div>
                          </td>
                        )}
                      </tr>
                      {is({ kind: 'process', key: p.key }) && (
                        <EditorRow colSpan={processCols}>
                          <ProcessForm slug={slug} process={p} index={i} onDone={close} />
                        </EditorRow>
                      )}
                    </Fragment>
                  );
                })}
              </tbody>
            </table>
          </div>
        )}
      </Panel>

      {(model.floatingNorms.length > 0 || canEdit) && (
        <Panel
          title={`Floating normalisations (${model.floatingNorms.length})`}
          actions={
            canEdit && !is({ kind: 'norm-new' }) ? (
              <Button size="sm" onClick={() => setEditor({ kind: 'norm-new' })}>
                Add floating normalisation
              </Button>
            ) : undefined
          }
        >
          {is({ kind: 'norm-new' }) && (
            <div className="mb-3 rounded-md bg-paper-sunk/50 px-3 py-3">
              <FloatingNormForm slug={slug} onDone={close} />
            </div>
          )}
          {model.floatingNorms.length === 0 ? (
            <p className="text-sm text-ink-muted">None: every template has a fixed normalisation. A floating normalisation is a free factor on the templates that choose it.</p>
          ) : (
            <div className="-mx-4 -mb-3 overflow-x-auto">
              <table className={tableClass} aria-label="Floating normalisations">
                <thead>
                  <tr>
                    <th scope="col" className={thClass}>Factor</th>
                    <th scope="col" className={`${thClass} text-right`}>Start</th>
                    <th scope="col" className={`${thClass} text-right`}>Allowed range</th>
                    <th scope="col" className={thClass}>Multiplies</th>
                    {canEdit && (
                      <th scope="col" className={`${thClass} text-right`}>
                        <span className="sr-only">Actions</span>
                      </th>
                    )}
                  </tr>
                </thead>
                <tbody>
                  {model.floatingNorms.map((f) => {
                    const targets = model.templates.filter((t) => t.floatingNorm === f.key);
                    return (
                      <tr key={f.key}>
                        <th scope="row" className={`${tdClass} text-left font-normal`}>
                          {f.label && <span className="mr-2 font-medium">{f.label}</span>}
                          <span className={`font-mono text-xs ${f.label ? 'text-ink-muted' : 'font-medium'}`}>{f.key}</span>
                        </th>
                        <td className={`${tdClass} text-right tabular-nums`} title="Factor on the nominal yield where the fit starts">
                          ×{f.start}
                        </td>
                        <td className={`${tdClass} text-right tabular-nums`} title="The fit keeps the factor within this range">
                          [{f.min}, {f.max}]
                        </td>
                        <td className={`${tdClass} text-xs`}>
                          {targets.length ? targets.map((t) => `${t.region} × ${t.process}`).join(', ') : <span className="text-ink-muted">no template yet</span>}
                        </td>
                        {canEdit && (
                          <td className={`${tdClass} text-right`}>
                            <DeleteNorm slug={slug} norm={f.key} />
                          </td>
                        )}
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </div>
          )}
        </Panel>
      )}

      {model.regions.length > 0 && model.processes.length > 0 && (
        <Panel title="Nominal templates">
          <p className="mb-2 text-xs text-ink-muted">
            Expected events per region and process, before the fit.{canEdit ? ' Choose a cell to enter or change its template, its variance and its floating normalisation.' : ''}
          </p>
          <div className="-mx-4 overflow-x-auto">
            <table className={tableClass} aria-label="Nominal templates">
              <thead>
                <tr>
                  <th scope="col" className={thClass}>Region</th>
                  {model.processes.map((p, i) => (
                    <th key={p.key} scope="col" className={`${thClass} text-right whitespace-nowrap`}>
                      <span className="inline-flex items-center gap-1.5">
                        <span aria-hidden className="inline-block size-2.5 rounded-sm" style={{ background: processColour(i, p.colour) }} />
                        {p.label || p.key}
                      </span>
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {model.regions.map((r) => (
                  <tr key={r.key}>
                    <th scope="row" className={`${tdClass} text-left font-mono text-xs font-normal`}>
                      {r.key}
                    </th>
                    {model.processes.map((p) => {
                      const t = templateOf.get(`${r.key}|${p.key}`);
                      const total = t ? round1(sum(t.nominal)) : null;
                      const text = t ? `${formatCount(total!)}` : '—';
                      const title = t
                        ? `${p.label || p.key} in ${r.label || r.key}: ${formatCount(total!)} events over ${t.nominal.length} bins${t.variance ? `, template statistics ±${formatCount(round1(Math.sqrt(sum(t.variance))))} events` : ''}${t.floatingNorm ? `, floating normalisation ${t.floatingNorm}` : ''}`
                        : `No template of ${p.label || p.key} in ${r.label || r.key}`;
                      const selected = is({ kind: 'template', region: r.key, process: p.key });
                      return (
                        <td key={p.key} className={`${tdClass} text-right tabular-nums ${selected ? 'bg-teal-soft' : ''}`} title={title}>
                          {canEdit ? (
                            <button
                              type="button"
                              aria-label={t ? `Edit template ${r.key} × ${p.key}, ${formatCount(total!)} events` : `Add template ${r.key} × ${p.key}`}
                              onClick={() => setEditor({ kind: 'template', region: r.key, process: p.key })}
                              className={`rounded px-1 hover:bg-paper-sunk hover:underline ${t ? 'text-ink' : 'text-ink-muted'}`}
                            >
                              {text}
                              {t?.floatingNorm && <sup className="ml-0.5 text-2xs text-teal-ink">f</sup>}
                            </button>
                          ) : (
                            <>
                              {text}
                              {t?.floatingNorm && <sup className="ml-0.5 text-2xs text-teal-ink">f</sup>}
                            </>
                          )}
                        </td>
                      );
                    })}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <p className="mt-1 text-2xs text-ink-muted">
            <sup className="text-teal-ink">f</sup> has a floating normalisation.
          </p>
          {editor?.kind === 'template' && (
            <div className="mt-3 rounded-md bg-paper-sunk/50 px-3 py-3">
              <TemplateEditor key={`${editor.region}|${editor.process}`} slug={slug} model={model} region={editor.region} process={editor.process} onDone={close} />
            </div>
          )}
        </Panel>
      )}

      {canEdit && model.regions.length > 0 && (
        <Panel title="Upload templates or observed data (CSV)">
          <ModelCsvUpload slug={slug} />
        </Panel>
      )}
    </div>
  );
}
