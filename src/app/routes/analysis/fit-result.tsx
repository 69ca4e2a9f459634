import { NavLink, Navigate, useParams } from 'react-router';
import { PageHeader } from '../../../components/ui/page';
import { EmptyState } from '../../../components/ui/empty-state';
import { FIT_TABS, fitTab } from '../../../features/fits/fit-tabs';

export function FitResultRoute() {
  const { slug = '', fitId = '', tab } = useParams();
  const current = fitTab(tab);
  const base = `/a/${slug}/fits/${fitId}`;
  if (!current) return <Navigate to={base} replace />;
  return (
    <>
      <PageHeader title={`Fit ${fitId}`} description="The result of one fit, with the exact model version it used." />
      <nav aria-label="Fit result views" className="mb-4 border-b border-rule">
        <ul className="-mb-px flex flex-wrap gap-1">
          {FIT_TABS.map((t) => (
            <li key={t.id}>
              <NavLink
                to={t.id === 'summary' ? base : `${base}/${t.id}`}
                end
                aria-current={t.id === current.id ? 'page' : undefined}
                className={`block border-b-2 px-3 py-1.5 text-sm ${
                  t.id === current.id ? 'border-teal font-semibold text-ink' : 'border-transparent text-ink-soft hover:border-rule-strong hover:text-ink'
                }`}
              >
                {t.label}
              </NavLink>
            </li>
          ))}
        </ul>
      </nav>
      <EmptyState title={current.label} notBuilt>
        <p>{current.future}</p>
        <p>Fit results are not stored yet, so there is nothing to show for fit {fitId}.</p>
      </EmptyState>
    </>
  );
}
