import type { ToyDistribution } from '@shared/schemas/toys';
import { Panel } from '../../../components/ui/page';
import { formatCount } from '../../../lib/format';
import { normalPdf } from '../../../lib/normal';
import { MeanSd } from './mean-sd';
import { ToyHistogramChart } from './toy-histogram-chart';

/** The standardised μ̂ of the toys, (μ̂ − μ_generated)/σ_μ, against the standard normal. */
export function MuToyPanel({ mu }: { mu: ToyDistribution | null }) {
  if (!mu)
    return (
      <Panel title="Signal strength over the toys">
        <p className="text-sm text-ink-muted">μ is held in this fit, so the toys have no μ̂ to compare.</p>
      </Panel>
    );
  return (
    <Panel title="Signal strength over the toys">
      <div className="flex flex-col gap-3">
        <ToyHistogramChart
          histogram={mu.histogram}
          title={`Standardised μ̂ over ${formatCount(mu.n)} toys`}
          description="Each toy's fitted μ̂ minus the μ it was drawn at, in units of the fit's σ_μ. If σ_μ is right and μ̂ unbiased, the bars follow the standard normal curve."
          xTitle="(μ̂ − μ generated) / σ_μ"
          valueName="standardised μ̂"
          expectationLabel={`standard normal × ${formatCount(mu.n)} toys`}
          density={(x) => mu.n * normalPdf(x)}
        />
        <MeanSd d={mu} estimate="μ̂" errorName="σ_μ" />
      </div>
    </Panel>
  );
}
