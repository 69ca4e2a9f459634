import { useQueries } from '@tanstack/react-query';
import { Link } from 'react-router';
import { useFits } from '../api/get-fits';
import { fitQueryOptions } from '../api/get-fit';
import { diagnosisPath } from '../../../lib/fits';

/** How many of the newest succeeded fits are read to find one that fitted the parameter. */
const LOOK_BACK = 3;

/**
 * A link to the parameter's diagnosis in the newest succeeded fit that fitted it (free, not held),
 * or a plain sentence when there is none.
 */
export function LatestDiagnosisLink({ slug, parameter }: { slug: string; parameter: string }) {
  const fits = useFits(slug);
  const candidates = (fits.data ?? []).filter((f) => f.state === 'succeeded').slice(0, LOOK_BACK);
  const heads = useQueries({ queries: candidates.map((f) => fitQueryOptions(slug, f.id)) });
  if (fits.isPending || heads.some((h) => h.isPending)) return <span className="text-xs text-ink-muted">Looking for a fit of {parameter}…</span>;
  const found = heads.map((h) => h.data).find((f) => f?.result?.nuisance.some((n) => n.name === parameter && !n.fixed));
  if (!found)
    return (
      <span className="text-xs text-ink-muted">
        {candidates.length === 0 ? 'No fit has succeeded yet, so there is nothing to diagnose.' : `None of the ${candidates.length === 1 ? 'latest fit' : `latest ${candidates.length} fits`} fitted ${parameter}.`}
      </span>
    );
  return (
    <Link to={diagnosisPath(slug, found.id, parameter)} className="text-sm font-medium text-teal-ink hover:underline" title={`Fit #${found.id}${found.label ? `: ${found.label}` : ''}`}>
      Diagnose in the latest fit
    </Link>
  );
}
