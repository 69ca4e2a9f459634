import { Link } from 'react-router';
import type { FitSummary } from '@shared/schemas/fits';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { decimalsFor, formatFixed, formatSigma } from '../../../lib/stats-format';
import { useCancelFit } from '../api/cancel-fit';
import { JobStateCell, StartedCell } from '../../../components/status/fit-state';
import { datasetInWords, fitName, fitPath, isActive, optionsInWords, variantInWords } from '../../../lib/fits';

function Headline({ fit }: { fit: FitSummary }) {
  const h = fit.headline;
  if (fit.withheld)
    return (
      <span className="text-xs font-medium text-amber-ink" title={fit.withheld}>
        withheld while blinded
      </span>
    );
  if (!h && fit.options.hiddenMu && fit.state === 'succeeded')
    return (
      <span className="text-xs font-medium text-plum" title="μ was fitted but is never sent: read the pulls and constraints">
        μ hidden
      </span>
    );
  if (!h) return <span className="text-ink-muted">–</span>;
  const dec = decimalsFor(h.muError);
  const muText = `${formatFixed(h.mu, dec)}${h.muError !== null ? ` ± ${formatFixed(h.muError, dec)}` : ''}`;
  return (
    <span className="flex flex-col items-end">
      {fit.options.controlOnly ? (
        <span className="whitespace-nowrap tabular-nums" title="μ is held at its start value in a fit of the control regions only">
          μ held at {formatFixed(h.mu, 2)}
        </span>
      ) : (
        <span className="whitespace-nowrap tabular-nums" title="Fitted signal strength μ̂ ± σ_μ (from the covariance), in multiples of the nominal signal">
          μ̂ = {muText}
        </span>
      )}
      {h.z !== null && (
        <span className="text-xs whitespace-nowrap text-ink-soft tabular-nums" title="Observed discovery significance Z = √q₀, in standard deviations">
          Z = {formatSigma(h.z)}
        </span>
      )}
      {h.warnings > 0 && (
        <span className="text-xs font-medium text-amber-ink" title="The convergence report carries warnings; read them on the result">
          {h.warnings} warning{h.warnings === 1 ? '' : 's'}
        </span>
      )}
    </span>
  );
}

const col = dataColumns<FitSummary>();

function makeColumns(slug: string, mayRun: boolean, cancel: ReturnType<typeof useCancelFit>) {
  return col.columns([
    col.accessor('id', {
      id: 'fit',
      header: 'Fit',
      cell: (c) => (
        <>
          <Link to={fitPath(slug, c.row.original.id)} className="font-medium text-teal-ink hover:underline">
            {fitName(c.row.original)}
          </Link>
          <span className="block text-2xs text-ink-muted">#{c.getValue()}</span>
        </>
      ),
    }),
    col.accessor('version', { header: 'Version', meta: { numeric: true, cellTitle: 'The frozen model version this fit used' } }),
    col.accessor('options', {
      header: 'Dataset and options',
      meta: { cellClass: 'text-xs' },
      cell: (c) => (
        <>
          <span className="block text-ink">{datasetInWords(c.getValue())}</span>
          <span className="block text-ink-muted">{optionsInWords(c.getValue())}</span>
          {variantInWords(c.getValue()).length > 0 && <span className="block text-ink-soft">Variant: {variantInWords(c.getValue()).join(' · ')}</span>}
        </>
      ),
    }),
    col.accessor('state', {
      header: 'State',
      cell: (c) => {
        return <JobStateCell job={c.row.original} />;
      },
    }),
    col.display({ id: 'result', header: 'Result', meta: { numeric: true }, cell: (c) => <Headline fit={c.row.original} /> }),
    col.accessor('createdAt', {
      header: 'Started',
      meta: { nowrap: true, cellClass: 'text-xs text-ink-soft' },
      cell: (c) => <StartedCell at={c.getValue()} by={c.row.original.createdBy} />,
    }),
    ...(mayRun
      ? [
          col.display({
            id: 'actions',
            header: 'Actions',
            meta: { srOnlyHeader: true },
            cell: (c) => {
              const f = c.row.original;
              return (
                isActive(f.state) && (
                  <Button size="sm" variant="danger" busy={cancel.isPending && cancel.variables === f.id} onClick={() => cancel.mutate(f.id)} aria-label={`Cancel ${f.label || `fit ${f.id}`}`}>
                    Cancel
                  </Button>
                )
              );
            },
          }),
        ]
      : []),
  ]);
}

/** Every fit of the analysis, newest first, with live progress for running ones. */
export function FitsTable({ slug, fits, mayRun }: { slug: string; fits: FitSummary[]; mayRun: boolean }) {
  const cancel = useCancelFit(slug);
  const columns = makeColumns(slug, mayRun, cancel);
  return (
    <div className="flex flex-col gap-2">
      <FormError error={cancel.error} />
      {/* a review set adds a dozen fits at once: the list scrolls within the window, its first column in view */}
      <DataTable columns={columns} data={fits} getRowId={(f) => String(f.id)} label="Fits" stickyFirstColumn />
    </div>
  );
}
