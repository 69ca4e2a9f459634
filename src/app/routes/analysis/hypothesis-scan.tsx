import { Link, useParams } from 'react-router';
import { useHypothesisScan } from '../../../features/hypothesis-scans/api/get-hypothesis-scan';
import { ScanResult } from '../../../features/hypothesis-scans/components/scan-result';
import { scanName } from '../../../features/hypothesis-scans/scan-words';
import { FitStateBadge } from '../../../components/status/fit-state';
import { PageHeader } from '../../../components/ui/page';
import { QueryView } from '../../../components/ui/query-view';
import { formatDateTime } from '../../../lib/format';
import { isActive } from '../../../lib/fits';

export function HypothesisScanRoute() {
  const { slug = '', scanId = '' } = useParams();
  const scan = useHypothesisScan(slug, Number(scanId));
  return (
    <QueryView query={scan} loadingLabel="Loading the scan…">
      {(s) => (
        <>
          <PageHeader
            title={scanName(s)}
            description={
              <>
                <Link to={`/a/${slug}/hypotheses`} className="text-teal-ink hover:underline">
                  Signal hypotheses
                </Link>{' '}
                · version {s.version} · {s.hypotheses} hypotheses · {s.options.dataset === 'observed' ? 'observed data' : 'expected only'} · started {formatDateTime(s.createdAt)}
                {s.createdBy ? ` by ${s.createdBy}` : ''}. Results inform the collaboration’s statistical review and approval; they do not replace it.
              </>
            }
            actions={<FitStateBadge state={s.state} />}
          />
          {isActive(s.state) && (
            <p className="text-sm text-ink-soft" role="status">
              {Math.round(s.progress * 100)} % · {s.stage}
            </p>
          )}
          {s.withheld && <p className="rounded-md border border-plum/30 bg-plum-soft px-3 py-2 text-sm text-plum">{s.withheld}</p>}
          {s.state === 'failed' && <p className="rounded-md border border-danger/30 bg-danger-soft px-3 py-2 text-sm text-danger">{s.failure}</p>}
          {s.state === 'cancelled' && <p className="text-sm text-ink-muted">{s.failure}</p>}
          {s.result && <ScanResult scan={s} result={s.result} />}
        </>
      )}
    </QueryView>
  );
}
