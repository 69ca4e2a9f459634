import type { ReactNode } from 'react';
import { Link } from 'react-router';
import type { FitDetail } from '@shared/schemas/fits';
import { formatDateTime } from '../../../lib/format';
import { EXPORT_TABLES, exportCsvUrl, exportJsonUrl, exportLatexUrl } from '../api/export-links';
import { FitStateBadge } from '../../../components/status/fit-state';
import { Badge } from '../../../components/ui/badge';
import { datasetInWords, diagnosisPath, fitName, optionsInWords, variantInWords } from '../../../lib/fits';
import { ConvergenceStrip } from './convergence';
import { analysisPath } from '../../../lib/api-client';

/** Downloads of a stored result: the whole result as JSON and every table as CSV. */
export function ExportLinks({ slug, fit }: { slug: string; fit: FitDetail }) {
  const converged = fit.result?.status === 'converged';
  const link = 'rounded px-1.5 py-0.5 text-xs font-medium text-teal-ink hover:bg-teal-soft hover:underline';
  return (
    <nav aria-label="Downloads of this result" className="flex flex-wrap items-center gap-1 text-xs">
      <span className="mr-1 text-ink-muted">Download</span>
      <a className={link} href={exportJsonUrl(slug, fit.id)} download title="The whole stored result, with the options and the model version, as JSON">
        JSON
      </a>
      <a className={link} href={`${analysisPath(slug, 'fits', fit.id, 'pack')}?format=html`} download title="The approval pack: one printable page with what was fitted, how, by which code, the approval state and every result (HTML, works offline)">
        Approval pack (HTML)
      </a>
      <a className={link} href={`${analysisPath(slug, 'fits', fit.id, 'pack')}?format=zip`} download title="The approval pack with the result as JSON and its tables as CSV (zip)">
        Approval pack (zip)
      </a>
      {converged &&
        // a fit with μ hidden has no summary, parameter table (the server refuses both) or grouped impacts to export
        EXPORT_TABLES.filter((t) => !(fit.options.hiddenMu && (t.table === 'summary' || t.table === 'parameters' || t.table === 'groups'))).map((t) => [
          <a key={t.table} className={link} href={exportCsvUrl(slug, fit.id, t.table)} download title={`${t.title} (CSV)`}>
            {t.label} CSV
          </a>,
          <a key={`${t.table}-latex`} className={link} href={exportLatexUrl(slug, fit.id, t.table)} download title={`${t.title} (LaTeX table)`}>
            {t.label} LaTeX
          </a>,
        ])}
    </nav>
  );
}

/**
 * What every view of a result starts with: which fit this is, on which version and data, and
 * whether the minimiser converged, with its warnings; `provenance` says what computed it. The convergence line stays in view while
 * the page scrolls, so the numbers below are never read without it.
 */
export function FitHeader({ slug, fit, provenance }: { slug: string; fit: FitDetail; provenance?: ReactNode }) {
  const variant = variantInWords(fit.options);
  return (
    <header className="mb-3 flex flex-col gap-2 border-b border-rule pb-3">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="flex flex-wrap items-center gap-2 text-xl font-semibold tracking-tight text-ink">
            {fitName(fit)}
            <FitStateBadge state={fit.state} />
            {fit.options.hiddenMu && (
              <Badge tone="plum" title="μ was fitted but is never sent: no μ̂, interval, significance, limit or impacts on μ">
                μ hidden
              </Badge>
            )}
          </h1>
          <p className="mt-0.5 text-sm text-ink-muted">
            <span title="The frozen model version this fit used">Model version {fit.version}</span> · {datasetInWords(fit.options)} · {optionsInWords(fit.options)}
          </p>
          <p className="text-sm text-ink-soft" title="How this fit differs from the nominal fit (the fit variants)">
            Variant: {variant.length ? variant.join(' · ') : 'the nominal fit'}
            {fit.options.hiddenMu ? '. μ is hidden: this fit shows pulls, constraints and control-region numbers only.' : ''}
          </p>
          {fit.checkOf && (
            <p className="text-sm text-ink-soft">
              A check of <span className="font-mono">{fit.checkOf.parameter}</span> from its diagnosis in fit #{fit.checkOf.fitId}:{' '}
              <Link className="text-teal-700 underline underline-offset-2" to={diagnosisPath(slug, fit.checkOf.fitId, fit.checkOf.parameter)}>
                back to the diagnosis
              </Link>
            </p>
          )}
          <p className="text-xs text-ink-muted">
            Fit #{fit.id} · started {formatDateTime(fit.createdAt)}
            {fit.createdBy ? ` by ${fit.createdBy}` : ''}
            {fit.finishedAt ? ` · finished ${formatDateTime(fit.finishedAt)}` : ''}
          </p>
          {provenance}
        </div>
        {fit.result && <ExportLinks slug={slug} fit={fit} />}
      </div>
    </header>
  );
}

/** The convergence line, kept in view while the page scrolls; place it as a sibling of the views. */
export function StickyConvergence({ fit }: { fit: FitDetail }) {
  if (!fit.result) return null;
  return (
    <div className="sticky top-12 z-10 -mx-6 mb-3 border-y border-rule bg-paper/95 px-6 py-1.5 backdrop-blur-sm">
      <ConvergenceStrip result={fit.result} />
    </div>
  );
}
