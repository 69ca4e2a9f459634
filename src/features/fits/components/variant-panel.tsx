import type { FitResultHead } from '@shared/schemas/fits';
import { Panel } from '../../../components/ui/page';
import { EXPECTED_BASIS, variantInWords } from '../../../lib/fits';
import { formatEdge } from '../../../lib/format';
import { BreakdownTable } from './breakdown-table';
import { DecorrelationTable } from './decorrelation-table';

/** Whether a result is the nominal fit (no variant of docs/likelihood.md §9). */
export function isNominal(result: FitResultHead): boolean {
  return variantInWords(result.options).length === 0;
}

/**
 * What a variant fit did and what only it computes: the parameters it held and at which values,
 * the basis of its expected numbers, the agreement of the parts of each split systematic, and the
 * uncertainty on μ by freezing.
 */
export function VariantPanel({ slug, result }: { slug: string; result: FitResultHead }) {
  const v = result.variant;
  return (
    <Panel title="Variant of this fit">
      <ul aria-label="How this fit differs from the nominal fit" className="flex list-disc flex-col gap-0.5 pl-5 text-sm">
        {variantInWords(result.options).map((w) => (
          <li key={w}>{w}</li>
        ))}
      </ul>
      {v && v.held.length > 0 && (
        <p className="mt-2 text-xs text-ink-soft">
          Held:{' '}
          {v.held.map((h, i) => (
            <span key={h.parameter}>
              {i > 0 && ', '}
              <span className="font-mono">{h.parameter}</span> = {formatEdge(Number(h.value.toPrecision(4)))}
              {h.asked === 'best' ? ' (its best fit)' : ''}
            </span>
          ))}
          .
        </p>
      )}
      {v && <p className="mt-1 text-xs text-ink-soft">Expected numbers built on the {EXPECTED_BASIS[v.expectedFrom]}.</p>}
      {v && v.decorrelation.length > 0 && (
        <div className="mt-3">
          <h3 className="mb-1 text-xs font-semibold text-ink-soft">Split systematics: do the parts agree?</h3>
          <DecorrelationTable slug={slug} rows={v.decorrelation} />
        </div>
      )}
      {v?.breakdown && v.breakdown.length > 0 && (
        <div className="mt-3">
          <h3 className="mb-1 text-xs font-semibold text-ink-soft">Uncertainty on μ by freezing</h3>
          <BreakdownTable rows={v.breakdown} label="Uncertainty breakdown by freezing" />
        </div>
      )}
    </Panel>
  );
}
