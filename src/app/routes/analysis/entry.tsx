import { useMemo, useState } from 'react';
import { Link, useParams } from 'react-router';
import { EntryStateBadge } from '../../../components/status/entry-state';
import { PageHeader, Panel } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { useEntries, useEntryGroups } from '../../../features/register/api/get-entries';
import { useEntry } from '../../../features/entry/api/get-entry';
import { EntryMetadata } from '../../../features/entry/components/entry-metadata';
import { ReviewPanel } from '../../../features/entry/components/review-panel';
import { EffectsList } from '../../../features/entry/components/effects-list';
import { VariationUpload } from '../../../features/entry/components/variation-upload';
import { ReplicaUpload } from '../../../features/entry/components/replica-upload';
import { RevisionHistory } from '../../../features/entry/components/revision-history';
import { ImpactCheckPanel } from '../../../features/entry/components/impact-check-panel';
import type { RegionInfo } from '../../../features/entry/components/effect-card';
import { useMembers } from '../../../features/members/api/get-members';
import { useModel } from '../../../features/model/api/get-model';
import { formatDateTime } from '../../../lib/format';
import { useCan } from '../../../features/analyses/use-can';
import { LatestDiagnosisLink } from '../../../features/fits/components/latest-diagnosis-link';
import { EntryQuestions } from '../../../features/questions/components/entry-questions';
import { RaiseQuestionForm } from '../../../features/questions/components/raise-question-form';
import { Button } from '../../../components/ui/button';

export function EntryRoute() {
  const { slug = '', key = '' } = useParams();
  const entry = useEntry(slug, key);
  const members = useMembers(slug);
  const model = useModel(slug);
  const entries = useEntries(slug);
  const mayRaise = useCan(slug)('question.raise');
  const [raising, setRaising] = useState(false);

  const regions = useMemo(() => new Map<string, RegionInfo>((model.data?.regions ?? []).map((r) => [r.key, { label: r.label, observable: r.observable, unit: r.unit }])), [model.data]);
  const processLabels = useMemo(() => new Map((model.data?.processes ?? []).map((p) => [p.key, p.label])), [model.data]);
  const groups = useEntryGroups(entries.data);

  const back = (
    <Link to={`/a/${slug}/register`} className="text-sm font-medium text-teal-ink hover:underline">
      Back to the register
    </Link>
  );

  return (
    <QueryView query={entry} loadingLabel="Loading the entry…">
      {(e) => (
        <>
          <PageHeader
            title={
              <span className="flex flex-wrap items-center gap-3">
                {e.label}
                <EntryStateBadge state={e.state} />
              </span>
            }
            description={
              <>
                <span className="font-mono">{e.key}</span>
                <span className="ml-3" title={`Version ${e.version} of this entry`}>
                  updated {formatDateTime(e.updatedAt)}
                </span>
              </>
            }
            actions={
              <>
                <LatestDiagnosisLink slug={slug} parameter={e.key} />
                <span aria-hidden className="text-rule-strong">
                  |
                </span>
                {back}
              </>
            }
          />
          <div className="grid gap-5 xl:grid-cols-[1fr_22rem]">
            <Panel title="Details">
              <EntryMetadata slug={slug} entry={e} members={members.data ?? []} groups={groups} />
            </Panel>
            <Panel title="Review" className="self-start">
              <ReviewPanel slug={slug} entry={e} />
            </Panel>
          </div>
          <div className="mt-5 flex flex-col gap-5">
            {e.impactCheck && (
              <Panel title="What this upload does to the result">
                <ImpactCheckPanel slug={slug} check={e.impactCheck} />
              </Panel>
            )}
            <Panel title={`Effects (${e.effects.length})`}>
              <EffectsList slug={slug} entry={e} regions={regions} processLabels={processLabels} />
            </Panel>
            {e.can.upload && (
              <Panel title="Upload variations">
                <VariationUpload slug={slug} entryKey={e.key} regions={regions} processLabels={processLabels} />
              </Panel>
            )}
            {e.can.upload && (
              <Panel title="Upload alternative templates">
                <p className="mb-3 max-w-prose text-xs text-ink-muted">
                  A set of alternative templates of one region and process (scale choices, generator alternatives, replicas) becomes this systematic: their envelope, their spread, or their
                  principal components.
                </p>
                <ReplicaUpload slug={slug} entryKey={e.key} regions={regions} processLabels={processLabels} />
              </Panel>
            )}
            <Panel
              title="Questions"
              actions={
                mayRaise && (
                  <Button size="sm" variant="secondary" onClick={() => setRaising((r) => !r)} aria-expanded={raising}>
                    Raise a question
                  </Button>
                )
              }
            >
              {raising && (
                <div className="mb-3 rounded-md border border-teal/40 px-3 py-2">
                  <RaiseQuestionForm slug={slug} entry={e.key} fit={null} onCancel={() => setRaising(false)} />
                </div>
              )}
              <EntryQuestions slug={slug} entry={e.key} />
            </Panel>
            <Panel title={`Revision history (${e.revisions.length})`}>
              <RevisionHistory revisions={e.revisions} />
            </Panel>
          </div>
        </>
      )}
    </QueryView>
  );
}
