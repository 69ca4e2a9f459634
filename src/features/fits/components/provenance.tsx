import { Link, useNavigate } from 'react-router';
import type { FitDetail } from '@shared/schemas/fits';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { fitPath, isActive } from '../../../lib/fits';
import { useReproduceFit, useReproduction } from '../api/reproduce-fit';

const short = (hash: string) => hash.slice(0, 12);

/**
 * Which engine computed this fit and from exactly what input, and a way to run it again. Answers
 * "could anyone get these numbers again?": the version and source hash name the code, the input
 * hash the frozen model and options.
 */
export function ProvenanceLine({ slug, fit, mayRun }: { slug: string; fit: FitDetail; mayRun: boolean }) {
  const reproduce = useReproduceFit(slug);
  const navigate = useNavigate();
  const p = fit.provenance;
  const ended = !isActive(fit.state) && fit.state !== 'cancelled';
  return (
    <div className="flex flex-wrap items-center gap-x-3 gap-y-1 text-xs text-ink-muted">
      {p ? (
        <span>
          Engine <span className="font-mono text-ink-soft">{p.engineVersion}</span> · sources{' '}
          <span className="font-mono text-ink-soft" title={`SHA-256 of the engine's sources that computed this fit: ${p.engineHash}`}>
            {short(p.engineHash)}
          </span>{' '}
          · input{' '}
          <span className="font-mono text-ink-soft" title={`SHA-256 of the exact input (the frozen model and the options): ${p.inputSha256}`}>
            {short(p.inputSha256)}
          </span>
        </span>
      ) : (
        <span title="Fits stored before the engine and input were recorded have no provenance">{isActive(fit.state) ? 'Engine and input recorded when it starts' : 'No engine or input recorded'}</span>
      )}
      {mayRun && ended && (
        <Button
          size="sm"
          variant="secondary"
          busy={reproduce.isPending}
          title="Run this fit again with the same model version and options, and list every number that differs (none should)"
          onClick={() => reproduce.mutate(fit.id, { onSuccess: (rerun) => navigate(fitPath(slug, rerun.id)) })}
        >
          Reproduce
        </Button>
      )}
      <FormError error={reproduce.error} />
    </div>
  );
}

/** On a rerun: whether it gave the same numbers as the fit it reproduces, and where not. */
export function ReproductionPanel({ slug, fit }: { slug: string; fit: FitDetail }) {
  const of = fit.reproduces;
  const ended = !isActive(fit.state);
  const query = useReproduction(slug, fit.id, of !== null && ended);
  if (of === null) return null;
  const original = (
    <Link className="text-teal-ink underline underline-offset-2" to={fitPath(slug, of)}>
      fit #{of}
    </Link>
  );
  if (!ended)
    return <p className="mb-3 rounded-md border border-rule bg-paper-raised px-3 py-2 text-sm text-ink-soft">This rerun of {original} is compared with it, number by number, when it ends.</p>;
  if (query.isPending) return <p className="mb-3 text-sm text-ink-muted">Comparing with {original}…</p>;
  if (query.isError)
    return (
      <div className="mb-3">
        <FormError error={query.error} />
      </div>
    );
  const r = query.data;
  const same = r.count === 0;
  return (
    <section aria-label="Reproduction" className={`mb-3 rounded-md border px-3 py-2 text-sm ${same && r.sameEngine && r.sameInput ? 'border-teal/30 bg-teal-soft/50' : 'border-amber/40 bg-amber-soft/60'}`}>
      <p className="text-ink">
        <span className="font-semibold">Reproduces {original}.</span>{' '}
        {same ? `All ${r.compared.toLocaleString('en')} numbers of the result are identical.` : `${r.count.toLocaleString('en')} of the ${r.compared.toLocaleString('en')} compared places differ.`}{' '}
        {r.sameEngine ? 'Same engine.' : 'A different engine (version or sources) computed it.'} {r.sameInput ? 'Same input.' : 'The input differs.'}
      </p>
      {!same && (
        <table className="mt-2 w-full text-xs">
          <caption className="sr-only">Where the rerun differs from the fit it reproduces</caption>
          <thead>
            <tr className="text-left text-ink-muted">
              <th className="py-1 pr-3 font-medium">Place in the result</th>
              <th className="py-1 pr-3 text-right font-medium">Fit #{of}</th>
              <th className="py-1 text-right font-medium">This rerun</th>
            </tr>
          </thead>
          <tbody className="font-mono tabular-nums">
            {r.differences.map((d) => (
              <tr key={d.path} className="border-t border-rule">
                <td className="py-0.5 pr-3">{d.path}</td>
                <td className="py-0.5 pr-3 text-right">{String(d.original)}</td>
                <td className="py-0.5 text-right">{String(d.rerun)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {r.count > r.differences.length && <p className="mt-1 text-xs text-ink-muted">The first {r.differences.length} are listed.</p>}
    </section>
  );
}
