import { Link } from 'react-router';
import type { AnalysisOverview as Overview } from '@shared/schemas/api';
import { ROLE_LABELS } from '@shared/permissions';
import { Panel } from '../../../components/ui/page';
import { formatDate, formatDateTime, plural } from '../../../lib/format';
import type { FitState } from '@shared/schemas/fits';
import { FIT_STATE_META } from '../../../components/status/fit-state';
import { fitName, fitPath } from '../../../lib/fits';
import { ACTION_LABELS } from '../action-labels';
import { EntryStateBar } from './entry-state-bar';


function Stat({ label, value, title, to }: { label: string; value: number; title: string; to?: string }) {
  const v = <span className="text-2xl font-semibold tabular-nums text-ink">{value.toLocaleString('en-GB')}</span>;
  return (
    <div title={title} className="flex flex-col">
      {to ? (
        <Link to={to} className="hover:text-teal-ink">
          {v}
        </Link>
      ) : (
        v
      )}
      <span className="text-xs text-ink-muted">{label}</span>
    </div>
  );
}

export function AnalysisOverview({ overview, isAdmin }: { overview: Overview; isAdmin: boolean }) {
  const { analysis, counts, modelVersion, latestFit, openQuestions, permissions, role } = overview;
  const base = `/a/${analysis.slug}`;
  return (
    <div className="grid gap-4 lg:grid-cols-3">
      <Panel title="Model version">
        {modelVersion ? (
          <div>
            <p className="text-lg font-semibold" title="The latest frozen snapshot of the model">
              Version {modelVersion.number}
            </p>
            <p className="text-xs text-ink-muted">Frozen {formatDateTime(modelVersion.createdAt)}</p>
            {modelVersion.note && <p className="mt-1 text-sm text-ink-soft">{modelVersion.note}</p>}
          </div>
        ) : (
          <p className="text-sm text-ink-muted">No version frozen yet. The model is still a working copy; a frozen version is what a fit and an approval refer to.</p>
        )}
      </Panel>

      <Panel title="Latest fit">
        {latestFit ? (
          <div>
            <Link to={fitPath(analysis.slug, latestFit.id)} className="text-lg font-semibold text-teal-ink hover:underline">
              {fitName(latestFit)}
            </Link>
            <p className="text-xs text-ink-muted">
              {FIT_STATE_META[latestFit.state as FitState]?.label ?? latestFit.state} · started {formatDateTime(latestFit.createdAt)}
            </p>
          </div>
        ) : (
          <p className="text-sm text-ink-muted">No fit has been run on this analysis yet.</p>
        )}
      </Panel>

      <Panel title="At a glance">
        <div className="grid grid-cols-2 gap-4">
          <Stat label="regions" value={counts.regions} title="Signal, control and validation regions in the model" to={`${base}/model`} />
          <Stat label="processes" value={counts.processes} title="Signal and background processes in the model" to={`${base}/model`} />
          <Stat label="members" value={counts.members} title="People with a role in this analysis" to={`${base}/members`} />
          <Stat label="open questions" value={openQuestions} title="Questions raised on fit results and not yet resolved" to={`${base}/questions`} />
        </div>
      </Panel>

      <Panel title="Register" className="lg:col-span-2" actions={<Link className="text-xs font-medium text-teal-ink hover:underline" to={`${base}/register`}>Open the register</Link>}>
        <p className="mb-2 text-sm text-ink-soft">
          {plural(counts.entries, 'systematic uncertainty', 'systematic uncertainties')} in the register, by review state:
        </p>
        <EntryStateBar counts={counts.entriesByState} />
      </Panel>

      <Panel title="Fit settings">
        <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
          <dt className="text-ink-muted">Signal strength μ</dt>
          <dd className="tabular-nums" title="Starting value of the signal strength and the range the fit may move it in (multiples of the nominal signal)">
            starts at {analysis.signalStrength.start}, range [{analysis.signalStrength.min}, {analysis.signalStrength.max}]
          </dd>
          <dt className="text-ink-muted">Over-constraint flag</dt>
          <dd className="tabular-nums" title="A nuisance parameter is flagged when its post-fit uncertainty falls below this fraction of its prior uncertainty">
            post-fit σ below {analysis.overConstraintThreshold} × prior σ
          </dd>
          <dt className="text-ink-muted">Created</dt>
          <dd>{formatDate(analysis.createdAt)}</dd>
        </dl>
      </Panel>

      <Panel title="What your role may do here" className="lg:col-span-2">
        <p className="mb-2 text-sm text-ink-soft">
          {role ? (
            <>
              You are a <strong className="font-semibold text-ink">{ROLE_LABELS[role].toLowerCase()}</strong> in this analysis{isAdmin ? ' and an admin' : ''}.
            </>
          ) : isAdmin ? (
            'You are not a member of this analysis; as an admin you may read it and manage its members.'
          ) : (
            'You have no role in this analysis.'
          )}
        </p>
        <ul aria-label="Allowed actions" className="grid gap-x-6 gap-y-0.5 text-sm sm:grid-cols-2">
          {permissions.map((p) => (
            <li key={p} className="flex items-start gap-1.5">
              <span aria-hidden className="mt-1.5 size-1.5 shrink-0 rounded-full bg-teal" />
              {ACTION_LABELS[p]}
            </li>
          ))}
        </ul>
      </Panel>
    </div>
  );
}
