import { useState, type FormEvent } from 'react';
import type { Blinding } from '@shared/schemas/api';
import type { BlindingAction, BlindingLog } from '@shared/schemas/review';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextAreaField } from '../../../components/ui/field';
import { Loading } from '../../../components/ui/loading';
import { isApiRequestError } from '../../../lib/api-client';
import { formatDateTime } from '../../../lib/format';
import { BlindingBadge } from '../../../components/status/blinding-badge';
import { useDecideUnblinding } from '../api/decide-unblinding';
import { useBlinding, useUnblindingChecklist } from '../api/get-blinding';
import { ChecklistView } from '../../../components/status/approval-checklist';
import { useChangeBlindingSettings } from '../api/change-blinding-settings';
import { useRequestUnblinding } from '../api/request-unblinding';

const STATE_WORDS: Record<Blinding, { heading: string; text: string }> = {
  blinded: {
    heading: 'This analysis is blinded',
    text: 'While it is blinded, the server never sends the signal regions’ observed counts to any screen, export or person, and it refuses observed-data fits that include a signal region. Control regions may be fitted to their data.',
  },
  unblinding_requested: {
    heading: 'Unblinding has been requested',
    text: 'An analyst has asked to unblind and a convener must decide. Until a convener approves, the server still never sends the signal regions’ observed counts.',
  },
  unblinded: {
    heading: 'This analysis is unblinded',
    text: 'The observed data of every region are shown and may be fitted.',
  },
};

const ACTION_WORDS: Record<BlindingAction, string> = {
  requested: 'requested unblinding',
  first_approval: 'approved unblinding (first of two approvals)',
  approved: 'approved unblinding',
  declined: 'declined unblinding',
  withdrawn: 'withdrew the request',
  settings: 'changed who must approve',
  member_added: 'added a member',
  member_joined: 'joined',
  role_changed: 'changed a role',
  member_removed: 'removed a member',
};

const DUTIES =
  'The server lets a convener approve only if they are not the requester, held the convener role before the request, did not invite the requester or give them their role, and were not invited or given their role by the requester. While the analysis is blinded, every membership change is written in this log.';

/** How many conveners must approve: a convener changes it while no request is pending. */
function ApprovalsSetting({ slug, log, mayChange }: { slug: string; log: BlindingLog; mayChange: boolean }) {
  const change = useChangeBlindingSettings(slug);
  const required = log.approvalsRequired;
  const words = required === 2 ? 'two conveners' : 'one convener';
  return (
    <div className="flex flex-col gap-1 text-sm text-ink-soft">
      <p>
        Unblinding needs <span className="font-semibold text-ink">{words}</span> other than the requester to approve.
        {log.state === 'unblinding_requested' && required === 2 && ` ${log.approvalsGiven} of 2 approvals given.`}
      </p>
      <p className="text-xs text-ink-muted">{DUTIES}</p>
      {mayChange && log.state === 'blinded' && (
        <div>
          <Button size="sm" busy={change.isPending} onClick={() => change.mutate({ approvals: required === 2 ? 1 : 2 })}>
            {required === 2 ? 'Let one convener approve' : 'Require two conveners to approve'}
          </Button>
          <FormError error={change.error} />
        </div>
      )}
    </div>
  );
}

function RequestForm({ slug }: { slug: string }) {
  const request = useRequestUnblinding(slug);
  const [note, setNote] = useState('');
  const err = isApiRequestError(request.error) ? request.error : null;
  const submit = (e: FormEvent) => {
    e.preventDefault();
    request.mutate({ note }, { onSuccess: () => setNote('') });
  };
  return (
    <form onSubmit={submit} aria-label="Request unblinding" className="flex flex-col gap-2">
      <FormError error={request.error} />
      <TextAreaField
        label="Why the analysis is ready to unblind"
        rows={3}
        value={note}
        onChange={(e) => setNote(e.target.value)}
        required
        error={err?.fieldMessage('note')}
        hint="At least 10 characters; the conveners read this before they decide."
      />
      <div>
        <Button type="submit" variant="primary" busy={request.isPending}>
          Request unblinding
        </Button>
      </div>
    </form>
  );
}

function DecisionForm({ slug }: { slug: string }) {
  const decide = useDecideUnblinding(slug);
  const [note, setNote] = useState('');
  const [missing, setMissing] = useState(false);
  const err = isApiRequestError(decide.error) ? decide.error : null;
  const send = (approve: boolean) => {
    if (!approve && !note.trim()) {
      setMissing(true);
      return;
    }
    setMissing(false);
    decide.mutate({ approve, note }, { onSuccess: () => setNote('') });
  };
  return (
    <form onSubmit={(e) => e.preventDefault()} aria-label="Decide on unblinding" className="flex flex-col gap-2">
      <FormError error={decide.error} />
      <TextAreaField
        label="Note"
        rows={3}
        value={note}
        onChange={(e) => setNote(e.target.value)}
        error={missing ? 'Say why you decline, so the analysts know what to do next.' : err?.fieldMessage('note')}
        hint="Needed when you decline, and when you approve while the checklist has open items."
      />
      <div className="flex flex-wrap gap-2">
        <Button variant="primary" busy={decide.isPending && decide.variables?.approve === true} disabled={decide.isPending} onClick={() => send(true)}>
          Approve unblinding
        </Button>
        <Button variant="danger" busy={decide.isPending && decide.variables?.approve === false} disabled={decide.isPending} onClick={() => send(false)}>
          Decline
        </Button>
      </div>
    </form>
  );
}

/** The server's checklist before unblinding, as it stands now: the request and the decision record it as it stood. */
function CurrentChecklist({ slug }: { slug: string }) {
  const checklist = useUnblindingChecklist(slug, true);
  if (checklist.isPending) return <Loading label="Checking what unblinding needs…" />;
  if (checklist.isError) return <FormError error={checklist.error} />;
  return <ChecklistView checklist={checklist.data} label="Before unblinding" />;
}

const MEMBERSHIP: BlindingAction[] = ['member_added', 'member_joined', 'role_changed', 'member_removed'];

function Log({ log }: { log: BlindingLog }) {
  if (log.events.length === 0) return <p className="text-sm text-ink-muted">Nothing has been requested or decided yet.</p>;
  return (
    <ol aria-label="Blinding log" className="flex flex-col divide-y divide-rule">
      {[...log.events].reverse().map((e) => {
        const membership = MEMBERSHIP.includes(e.action);
        return (
          <li key={e.id} className="py-1.5 text-sm">
            <p>
              {membership ? (
                <>
                  <span className="mr-1.5 rounded-sm bg-paper-sunk px-1 text-xs font-medium text-ink-soft">membership</span>
                  {e.note}
                </>
              ) : (
                <>
                  <span className="font-semibold">{e.by ?? 'a former member'}</span> {ACTION_WORDS[e.action]}
                </>
              )}
              <span className="ml-2 text-xs text-ink-muted">
                <time dateTime={e.at}>{formatDateTime(e.at)}</time>
              </span>
            </p>
            {e.note && !membership && <p className="text-sm whitespace-pre-wrap text-ink-soft">{e.note}</p>}
            {e.checklist && (
              <details className="mt-1 text-xs">
                <summary className="cursor-pointer text-ink-muted">
                  The checklist as it stood: {e.checklist.items.filter((i) => i.ok).length} of {e.checklist.items.length} held
                </summary>
                <div className="mt-1">
                  <ChecklistView checklist={e.checklist} label="Checklist then" />
                </div>
              </details>
            )}
          </li>
        );
      })}
    </ol>
  );
}

/**
 * The blinding state, large, with what it means; the log of requests and decisions; an analyst's
 * request and a convener's decision when the state allows them.
 */
export function BlindingPanel({ slug, state: fallback, mayRequest, mayDecide }: { slug: string; state: Blinding; mayRequest: boolean; mayDecide: boolean }) {
  const log = useBlinding(slug);
  const state = log.data?.state ?? fallback;
  const words = STATE_WORDS[state];
  return (
    <section aria-labelledby="blinding-heading" className={`mb-4 rounded-lg border px-5 py-4 ${state === 'unblinded' ? 'border-teal/40 bg-teal-soft/30' : 'border-amber/50 bg-amber-soft/40'}`}>
      <div className="grid gap-5 lg:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
        <div className="flex flex-col gap-2">
          <div className="flex flex-wrap items-center gap-3">
            <h2 id="blinding-heading" className="text-lg font-semibold text-ink">
              {words.heading}
            </h2>
            <BlindingBadge blinding={state} />
          </div>
          <p className="text-sm text-ink-soft">{words.text}</p>
          {state !== 'unblinded' && <CurrentChecklist slug={slug} />}
          {state === 'blinded' && mayRequest && <RequestForm slug={slug} />}
          {state === 'unblinding_requested' && mayDecide && <DecisionForm slug={slug} />}
          {state === 'unblinding_requested' && !mayDecide && <p className="text-xs text-ink-muted">A convener decides on the request.</p>}
          {state !== 'unblinded' && log.data && <ApprovalsSetting slug={slug} log={log.data} mayChange={mayDecide} />}
        </div>
        <div>
          <h3 className="mb-1 text-sm font-semibold text-ink">Log</h3>
          {log.isPending ? <Loading label="Loading the log…" /> : log.isError ? <FormError error={log.error} /> : <Log log={log.data} />}
        </div>
      </div>
    </section>
  );
}
