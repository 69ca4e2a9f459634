import { useMemo, useRef, useState } from 'react';
import type { Model } from '@shared/schemas/api';
import type { FitPart, FitResultHead } from '@shared/schemas/fits';
import { ExportButtons } from '../../../components/charts/export-buttons';
import { fitRegionChart, type FitStage, type RegionYields } from '../../../components/charts/fit-region-chart';
import { StackedChart } from '../../../components/charts/stacked-chart';
import { Badge } from '../../../components/ui/badge';
import { Panel } from '../../../components/ui/page';
import { formatEdge } from '../../../lib/format';

type Stage = FitStage;

const ROLE_LABEL = { signal: 'signal region', control: 'control region', validation: 'validation region' } as const;

function RegionChart({ result, y, stage, model }: { result: FitResultHead; y: RegionYields; stage: Stage; model?: Model }) {
  const ref = useRef<SVGSVGElement>(null);
  const d = useMemo(() => fitRegionChart(result, y, stage, model), [result, y, stage, model]);
  const title = `${d.stage} ${d.regionLabel}`;
  return (
    <Panel
      title={
        <span className="flex flex-wrap items-center gap-2">
          {d.regionLabel}
          <span className="font-mono text-2xs font-normal text-ink-muted">{y.region}</span>
          <Badge tone={y.role === 'signal' ? 'plum' : y.role === 'control' ? 'teal' : 'neutral'}>{ROLE_LABEL[y.role]}</Badge>
          {!y.inFit && (
            <Badge tone="amber" title="This region was left out of the likelihood; its yields are shown with the fitted parameters">
              not in the fit
            </Badge>
          )}
        </span>
      }
      actions={<ExportButtons title={title} svg={ref} />}
    >
      <StackedChart d={d} svgRef={ref} />
      {d.withheld && (
        <p className="mt-1 text-xs text-amber-ink">
          {y.role === 'signal' ? 'The server never sends this signal region’s observed counts while the analysis is blinded.' : 'No data for this region in this result.'}
        </p>
      )}
    </Panel>
  );
}

/** Per region, the pre-fit or post-fit stack with its band, the data and the ratio panel. */
export function DistributionsView({ result, yields, model }: { result: FitResultHead; yields: FitPart<'yields'>; model?: Model }) {
  const hasPost = yields.postfit !== null;
  const [stage, setStage] = useState<Stage>(hasPost ? 'postfit' : 'prefit');
  const list = (stage === 'postfit' ? yields.postfit : yields.prefit) ?? yields.prefit;
  return (
    <div className="flex flex-col gap-4">
      <fieldset className="flex flex-wrap items-center gap-4">
        <legend className="sr-only">Expectation</legend>
        {(['prefit', 'postfit'] as const).map((s) => (
          <label key={s} className={`flex items-center gap-1.5 text-sm ${s === 'postfit' && !hasPost ? 'text-ink-muted' : ''}`}>
            <input type="radio" name="dist-stage" className="accent-teal" checked={stage === s} disabled={s === 'postfit' && !hasPost} onChange={() => setStage(s)} />
            {s === 'prefit' ? 'Pre-fit expectation' : 'Post-fit expectation'}
          </label>
        ))}
        <span className="text-xs text-ink-muted">
          {result.data.dataset === 'asimov' ? `The fitted data are the pre-fit Asimov dataset at μ = ${formatEdge(result.data.asimovMu ?? 1)}.` : 'The fitted data are the observed counts.'} Error
          bars are Garwood 68 % Poisson intervals; the stippled band is the expectation's ±1σ.
        </span>
      </fieldset>
      <div className="grid gap-4 xl:grid-cols-2">
        {list.map((y) => (
          <RegionChart key={y.region} result={result} y={y} stage={stage} model={model} />
        ))}
      </div>
    </div>
  );
}
