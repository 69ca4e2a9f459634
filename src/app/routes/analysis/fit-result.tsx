import { useEffect, useRef, type ReactNode } from 'react';
import { Link, NavLink, Navigate, useParams } from 'react-router';
import { useQueryClient } from '@tanstack/react-query';
import type { FitDetail, FitPart, FitPartName, FitResultHead } from '@shared/schemas/fits';
import { FitProgress } from '../../../components/status/fit-state';
import { Button } from '../../../components/ui/button';
import { EmptyState } from '../../../components/ui/empty-state';
import { FormError } from '../../../components/ui/error-notice';
import { Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { diagnosisPath, fitPath, isActive } from '../../../lib/fits';
import { useCan } from '../../../features/analyses/use-can';
import { useCancelFit } from '../../../features/fits/api/cancel-fit';
import { invalidateFitLists, useFit } from '../../../features/fits/api/get-fit';
import { useFitPart } from '../../../features/fits/api/get-fit-part';
import { CompareView } from '../../../features/fits/components/compare-view';
import { ConvergenceReport } from '../../../features/fits/components/convergence';
import { CorrelationView } from '../../../features/fits/components/correlation-view';
import { DistributionsView } from '../../../features/fits/components/distributions-view';
import { FitHeader, StickyConvergence } from '../../../features/fits/components/fit-header';
import { ProvenanceLine, ReproductionPanel } from '../../../features/fits/components/provenance';
import { GroupsView } from '../../../features/fits/components/groups-view';
import { HiddenMuSummary, SummaryView } from '../../../features/fits/components/summary-view';
import { isNominal, VariantPanel } from '../../../features/fits/components/variant-panel';
import { FIT_TABS, fitTab, type FitTabId } from '../../../features/fits/fit-tabs';
import { useModel } from '../../../features/model/api/get-model';
import { ToysView } from '../../../features/toys/components/toys-view';
import { DiagnosticsTab } from './fit-views/diagnosis';
import { ImpactsWithQuestions, PullsWithQuestions } from './fit-views/questions';

/** The views that need μ̂: a fit with μ hidden has none of them. */
const NEEDS_MU: ReadonlySet<FitTabId> = new Set(['impacts', 'groups', 'toys']);

function Tabs({ base, current, hiddenMu }: { base: string; current: FitTabId; hiddenMu: boolean }) {
  return (
    <nav aria-label="Fit result views" className="mb-4 border-b border-rule">
      <ul className="-mb-px flex flex-wrap gap-1">
        {FIT_TABS.filter((t) => !(hiddenMu && NEEDS_MU.has(t.id))).map((t) => (
          <li key={t.id}>
            <NavLink
              to={t.id === 'summary' ? base : `${base}/${t.id}`}
              end
              title={t.description}
              aria-current={t.id === current ? 'page' : undefined}
              className={`block border-b-2 px-3 py-1.5 text-sm ${
                t.id === current ? 'border-teal font-semibold text-ink' : 'border-transparent text-ink-soft hover:border-rule-strong hover:text-ink'
              }`}
            >
              {t.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}

/** A view that needs one of the result's large parts: fetched when the view opens. */
function WithPart<K extends FitPartName>({ slug, fitId, part, children }: { slug: string; fitId: number; part: K; children: (value: FitPart<K>) => ReactNode }) {
  const query = useFitPart(slug, fitId, part);
  return (
    <QueryView query={query} loadingLabel={`Loading the ${part === 'yields' ? 'distributions' : part}…`}>
      {children}
    </QueryView>
  );
}

/** The distributions, drawn with the model's region and process labels. */
function DistributionsWithModel({ slug, fit, result }: { slug: string; fit: FitDetail; result: FitResultHead }) {
  const model = useModel(slug);
  return (
    <WithPart slug={slug} fitId={fit.id} part="yields">
      {(yields) => <DistributionsView result={result} yields={yields} model={model.data} />}
    </WithPart>
  );
}

function TabView({ tab, slug, fit, result }: { tab: FitTabId; slug: string; fit: FitDetail; result: FitResultHead }) {
  const can = useCan(slug);
  const nuisance = new Set(result.nuisance.filter((n) => !n.fixed).map((n) => n.name));
  if (result.options.hiddenMu && NEEDS_MU.has(tab))
    return (
      <EmptyState title="Not for a fit with μ hidden">
        <p>This view is computed from μ̂, which a fit with μ hidden never sends. Read the pulls, correlations and control regions instead.</p>
      </EmptyState>
    );
  switch (tab) {
    case 'summary':
      return (
        <div className="flex flex-col gap-4">
          {!isNominal(result) && <VariantPanel slug={slug} result={result} />}
          {result.options.hiddenMu ? <HiddenMuSummary result={result} /> : <SummaryView result={result} />}
        </div>
      );
    case 'pulls':
      return <PullsWithQuestions slug={slug} fit={fit} result={result} />;
    case 'impacts':
      return <ImpactsWithQuestions slug={slug} fit={fit} result={result} />;
    case 'groups':
      return <GroupsView result={result} />;
    case 'correlations':
      return (
        <WithPart slug={slug} fitId={fit.id} part="correlation">
          {(correlation) => <CorrelationView result={result} correlation={correlation} linkTo={(name) => (nuisance.has(name) ? diagnosisPath(slug, fit.id, name) : null)} />}
        </WithPart>
      );
    case 'distributions':
      return <DistributionsWithModel slug={slug} fit={fit} result={result} />;
    case 'diagnostics':
      return <DiagnosticsTab slug={slug} fitId={fit.id} result={result} />;
    case 'toys':
      return <ToysView slug={slug} fitId={fit.id} muHat={result.summary && !result.summary.mu.fixed ? result.summary.mu.value : null} mayRun={can('fit.run')} />;
    case 'compare':
      return <CompareView slug={slug} fitId={fit.id} />;
  }
}

/** A queued or running fit: its progress, live, and a way to stop it. */
function Running({ slug, fit }: { slug: string; fit: FitDetail }) {
  const cancel = useCancelFit(slug);
  const mayRun = useCan(slug)('fit.run');
  return (
    <Panel title={fit.state === 'queued' ? 'Waiting to start' : 'Running'}>
      <div className="flex flex-wrap items-center gap-4">
        <FitProgress fit={fit} className="w-full max-w-md" />
        {mayRun && (
          <Button variant="danger" size="sm" busy={cancel.isPending} onClick={() => cancel.mutate(fit.id)}>
            Cancel the fit
          </Button>
        )}
      </div>
      <FormError error={cancel.error} />
      <p className="mt-2 text-xs text-ink-muted">This page follows the job as it runs; the result appears here when it ends. You may leave and come back.</p>
    </Panel>
  );
}

function FitBody({ slug, fit, tab }: { slug: string; fit: FitDetail; tab: FitTabId }) {
  const base = fitPath(slug, fit.id);
  if (isActive(fit.state)) return <Running slug={slug} fit={fit} />;
  if (fit.state === 'cancelled')
    return (
      <EmptyState title="This fit was cancelled">
        <p>It stopped before it finished, so there is no result. Start a new fit from the fits page.</p>
      </EmptyState>
    );
  if (fit.withheld)
    return (
      <EmptyState title="Withheld while the analysis is blinded">
        <p>{fit.withheld}</p>
      </EmptyState>
    );
  const result = fit.result;
  // a converged fit with μ hidden has no summary by design; any other fit without one failed
  if (fit.state === 'failed' || !result || result.status !== 'converged' || (!result.summary && !result.options.hiddenMu))
    return (
      <Panel title="The fit failed: no result">
        {fit.failure && (
          <p role="alert" className="mb-3 rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
            {fit.failure}
          </p>
        )}
        {result ? (
          <ConvergenceReport convergence={result.convergence} status={result.status} />
        ) : (
          <p className="text-sm text-ink-muted">The job ended without a convergence report.</p>
        )}
        <p className="mt-3 text-xs text-ink-muted">A fit that did not converge is kept with its report and shows no numbers.</p>
      </Panel>
    );
  return (
    <>
      <StickyConvergence fit={fit} />
      <Tabs base={base} current={tab} hiddenMu={result.options.hiddenMu} />
      <TabView tab={tab} slug={slug} fit={fit} result={result} />
    </>
  );
}

export function FitResultRoute() {
  const { slug = '', fitId = '', tab } = useParams();
  const current = fitTab(tab);
  const id = /^\d+$/.test(fitId) ? Number(fitId) : NaN;
  const fit = useFit(slug, id);
  const mayRun = useCan(slug)('fit.run');
  const queryClient = useQueryClient();
  const wasActive = useRef(false);
  const state = fit.data?.state;
  // When a job this page was following ends, the list and the overview move on too.
  useEffect(() => {
    if (!state) return;
    if (isActive(state)) wasActive.current = true;
    else if (wasActive.current) {
      wasActive.current = false;
      invalidateFitLists(queryClient, slug);
    }
  }, [state, queryClient, slug]);

  const base = `/a/${slug}/fits/${fitId}`;
  if (!current) return <Navigate to={base} replace />;
  if (Number.isNaN(id))
    return (
      <EmptyState title="No such fit">
        <p>
          “{fitId}” is not a fit number. <Link to={`/a/${slug}/fits`}>Back to the fits</Link>.
        </p>
      </EmptyState>
    );
  return (
    <QueryView query={fit} loadingLabel="Loading the fit…">
      {(f) => (
        <>
          <p className="mb-1 text-xs">
            <Link to={`/a/${slug}/fits`} className="text-teal-ink hover:underline">
              ← Fits
            </Link>
          </p>
          <FitHeader slug={slug} fit={f} provenance={<ProvenanceLine slug={slug} fit={f} mayRun={mayRun} />} />
          <ReproductionPanel slug={slug} fit={f} />
          <FitBody slug={slug} fit={f} tab={current.id} />
        </>
      )}
    </QueryView>
  );
}
