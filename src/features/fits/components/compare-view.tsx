import { useSearchParams } from 'react-router';
import type { FitComparison, FitSummary } from '@shared/schemas/fits';
import { SelectField } from '../../../components/ui/field';
import { Panel, tableClass, tdClass, thClass } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { formatDateTime } from '../../../lib/format';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { useComparison } from '../api/get-comparison';
import { useFits } from '../api/get-fits';
import { datasetInWords, fitName } from '../../../lib/fits';

type Delta = FitComparison['mu'];

function DeltaCells({ d, digits = 3, title }: { d: Delta; digits?: number; title: string }) {
  const big = d.delta !== null && Math.abs(d.delta) >= 0.5;
  return (
    <>
      <td className={`${tdClass} text-right tabular-nums`} title={`${title} in this fit`}>
        {formatFixed(d.a, digits)}
      </td>
      <td className={`${tdClass} text-right tabular-nums`} title={`${title} in the other fit`}>
        {formatFixed(d.b, digits)}
      </td>
      <td className={`${tdClass} text-right tabular-nums ${big ? 'font-semibold text-plum' : ''}`} title={`Change of the ${title.toLowerCase()}: other − this`}>
        {formatSigned(d.delta, digits)}
      </td>
    </>
  );
}

function fitNameAndVersion(f: FitSummary) {
  return `${fitName(f)} (#${f.id}, version ${f.version})`;
}

/** The changes from this fit to another, largest first. */
export function ComparisonTable({ comparison: c }: { comparison: FitComparison }) {
  const params = [...c.parameters].sort((x, y) => y.change - x.change || x.name.localeCompare(y.name));
  const head = (label: string) => (
    <>
      <th scope="col" className={`${thClass} text-right`}>
        {label}, this
      </th>
      <th scope="col" className={`${thClass} text-right`}>
        other
      </th>
      <th scope="col" className={`${thClass} text-right`}>
        Δ
      </th>
    </>
  );
  return (
    <div className="flex flex-col gap-4">
      <Panel title="Signal strength">
        <table className={tableClass} aria-label="Change in the signal strength">
          <thead>
            <tr>
              <th scope="col" className={thClass}>
                Quantity
              </th>
              {head('Value')}
            </tr>
          </thead>
          <tbody>
            <tr>
              <th scope="row" className={`${tdClass} text-left font-normal`}>
                μ̂
              </th>
              <DeltaCells d={c.mu} title="Best-fit μ" />
            </tr>
            <tr>
              <th scope="row" className={`${tdClass} text-left font-normal`}>
                σ_μ
              </th>
              <DeltaCells d={c.muError} title="σ_μ" />
            </tr>
          </tbody>
        </table>
      </Panel>
      <Panel title={`Nuisance parameters, largest change first (${params.length})`}>
        <div className="overflow-x-auto">
          <table className={tableClass} aria-label="Changes per parameter">
            <thead>
              <tr>
                <th scope="col" className={thClass}>
                  Parameter
                </th>
                {head('Pull')}
                {head('Constraint')}
                {head('Impact')}
                <th scope="col" className={`${thClass} text-right`} title="The largest |Δ| of pull, constraint and impact: the sort key">
                  Change
                </th>
              </tr>
            </thead>
            <tbody>
              {params.map((p) => (
                <tr key={p.name}>
                  <th scope="row" className={`${tdClass} text-left font-normal whitespace-nowrap`}>
                    <span className="font-mono text-xs">{p.name}</span>
                    {p.only && <span className="ml-1 text-xs text-amber-ink">only in {p.only === 'a' ? 'this fit' : 'the other fit'}</span>}
                    {p.group && <span className="ml-2 text-2xs text-ink-muted">{p.group}</span>}
                  </th>
                  <DeltaCells d={p.pull} title="Pull" />
                  <DeltaCells d={p.constraint} title="Constraint" />
                  <DeltaCells d={p.impact} digits={4} title="Impact max(|Δμ+|, |Δμ−|)" />
                  <td className={`${tdClass} text-right font-semibold tabular-nums`} title="Largest |Δ| of pull, constraint and impact">
                    {formatFixed(p.change, 3)}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </Panel>
    </div>
  );
}

/** Choose another fit of the analysis and read what changed. */
export function CompareView({ slug, fitId }: { slug: string; fitId: number }) {
  const [params, setParams] = useSearchParams();
  const fits = useFits(slug);
  const raw = params.get('with');
  const otherId = raw && /^\d+$/.test(raw) ? Number(raw) : null;
  const comparison = useComparison(slug, fitId, otherId);
  const others = (fits.data ?? []).filter((f) => f.id !== fitId && f.state === 'succeeded');
  return (
    <div className="flex flex-col gap-4">
      <SelectField
        label="Compare with"
        value={otherId ?? ''}
        onChange={(e) => setParams(e.target.value ? { with: e.target.value } : {}, { replace: true })}
        className="max-w-xl"
        hint={fits.isSuccess && others.length === 0 ? 'No other finished fit in this analysis yet.' : undefined}
      >
        <option value="">Choose another fit…</option>
        {others.map((f) => (
          <option key={f.id} value={f.id}>
            {fitNameAndVersion(f)}: {datasetInWords(f.options)}, {formatDateTime(f.createdAt)}
          </option>
        ))}
      </SelectField>
      {otherId !== null && (
        <QueryView query={comparison} loadingLabel="Comparing the fits…">
          {(c) => (
            <>
              <p className="text-sm text-ink-soft">
                Δ = <strong>{fitNameAndVersion(c.b)}</strong> − <strong>{fitNameAndVersion(c.a)}</strong>.
              </p>
              <ComparisonTable comparison={c} />
            </>
          )}
        </QueryView>
      )}
    </div>
  );
}
