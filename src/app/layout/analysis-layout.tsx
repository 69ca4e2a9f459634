import { Link, NavLink, Outlet, useParams } from 'react-router';
import { BlindingBadge } from '../../components/status/blinding-badge';
import { PlotLabelsProvider } from '../../components/charts/plot-label';
import { ErrorNotice } from '../../components/ui/error-notice';
import { Loading } from '../../components/ui/loading';
import { useAnalysis } from '../../features/analyses/api/get-analysis';
import { RoleBadge } from '../../features/analyses/components/role-badge';
import { useMe } from '../../features/auth/api/get-me';

const SECTIONS = [
  { to: '', label: 'Overview', end: true },
  { to: 'register', label: 'Register' },
  { to: 'pruning', label: 'Pruning' },
  { to: 'model', label: 'Model' },
  { to: 'groups', label: 'Groups' },
  { to: 'fits', label: 'Fits' },
  { to: 'hypotheses', label: 'Hypotheses' },
  { to: 'questions', label: 'Questions' },
  { to: 'members', label: 'Members' },
] as const;

const sideLink = ({ isActive }: { isActive: boolean }) =>
  `flex items-center rounded-md border-l-2 px-3 py-1.5 text-sm ${
    isActive ? 'border-teal bg-paper-raised font-semibold text-ink' : 'border-transparent text-ink-soft hover:bg-paper-sunk hover:text-ink'
  }`;

/** An analysis: its name and blinding state always in view, its screens in a left navigation. */
export function AnalysisLayout() {
  const { slug = '' } = useParams();
  const analysis = useAnalysis(slug);
  const me = useMe();
  const overview = analysis.data;

  return (
    <div className="flex min-h-[calc(100vh-3rem)]">
      <aside className="w-52 shrink-0 border-r border-rule bg-paper-sunk/40 px-3 py-4">
        <nav aria-label="Analysis">
          <p className="mb-2 px-3 text-xs leading-snug font-semibold text-ink-muted">
            {overview?.analysis.name ?? slug}
          </p>
          <ul className="flex flex-col gap-0.5">
            {SECTIONS.map((s) => (
              <li key={s.label}>
                <NavLink to={`/a/${slug}${s.to ? `/${s.to}` : ''}`} end={'end' in s} className={sideLink}>
                  {s.label}
                </NavLink>
              </li>
            ))}
          </ul>
        </nav>
      </aside>
      <div className="min-w-0 flex-1">
        <section aria-label="Analysis status" className="flex flex-wrap items-center gap-3 border-b border-rule bg-paper-raised/50 px-6 py-2">
          <span className="text-sm font-semibold text-ink">{overview?.analysis.name ?? slug}</span>
          {overview && <BlindingBadge blinding={overview.analysis.blinding} />}
          {overview && <RoleBadge role={overview.role} isAdmin={me.data?.user.isAdmin} />}
        </section>
        <main id="main" className="px-6 py-5">
          {analysis.isPending ? (
            <Loading label="Loading the analysis…" />
          ) : analysis.isError ? (
            <div className="flex flex-col gap-3">
              <ErrorNotice error={analysis.error} onRetry={() => void analysis.refetch()} />
              <Link to="/" className="text-sm font-medium text-teal-ink hover:underline">
                Back to the analyses
              </Link>
            </div>
          ) : (
            <PlotLabelsProvider labels={overview?.analysis.plotLabels ?? null}>
              <Outlet />
            </PlotLabelsProvider>
          )}
        </main>
      </div>
    </div>
  );
}
