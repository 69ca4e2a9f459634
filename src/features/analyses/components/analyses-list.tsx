import { Link } from 'react-router';
import type { AnalysisSummary } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { plural } from '../../../lib/format';
import { BlindingBadge } from '../../../components/status/blinding-badge';
import { RoleBadge } from './role-badge';

export function AnalysesList({ analyses, isAdmin }: { analyses: AnalysisSummary[]; isAdmin: boolean }) {
  if (analyses.length === 0)
    return (
      <EmptyState title="No analyses yet">
        {isAdmin ? (
          <p>Create the first analysis with the form on this page, then add its members.</p>
        ) : (
          <p>You are not a member of any analysis. An admin or a convener can add you to one.</p>
        )}
      </EmptyState>
    );
  return (
    <ul aria-label="Analyses" className="grid content-start items-start gap-3 self-start md:grid-cols-2">
      {analyses.map((a) => (
        <li key={a.slug} className="group relative rounded-lg border border-rule bg-paper-raised px-4 py-3 hover:border-teal/60">
          <div className="flex items-start justify-between gap-3">
            <h2 className="text-base font-semibold">
              <Link to={`/a/${a.slug}`} className="text-ink after:absolute after:inset-0 after:content-[''] hover:text-teal-ink">
                {a.name}
              </Link>
            </h2>
            <BlindingBadge blinding={a.blinding} />
          </div>
          <p className="mt-0.5 font-mono text-xs text-ink-muted">{a.slug}</p>
          {a.description && <p className="mt-2 line-clamp-2 text-sm text-ink-soft">{a.description}</p>}
          <div className="mt-3 flex flex-wrap items-center gap-3 text-xs text-ink-muted">
            <RoleBadge role={a.role} isAdmin={isAdmin} />
            <span title="Systematic uncertainties in the register">{plural(a.entries, 'register entry', 'register entries')}</span>
            <span title="People with a role in this analysis">{plural(a.members, 'member')}</span>
          </div>
        </li>
      ))}
    </ul>
  );
}
