import { useState, type FormEvent } from 'react';
import type { Region } from '@shared/schemas/api';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextAreaField } from '../../../components/ui/field';
import { fieldError } from '../../../lib/form-issues';
import { formatNumberList, parseNumberList, sum } from '../../../lib/numbers';
import { usePutObserved } from '../api/put-observed';

/** A region's observed counts. A withheld region's counts are not shown: they can be replaced or cleared, not read. */
export function ObservedEditor({ slug, region, onDone }: { slug: string; region: Region; onDone: () => void }) {
  const bins = region.edges.length - 1;
  const [text, setText] = useState(formatNumberList(region.observed));
  const [local, setLocal] = useState<string | undefined>();
  const put = usePutObserved(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    const p = parseNumberList(text);
    if (p.error !== null) return setLocal(p.error);
    if (p.values.length !== bins) return setLocal(`has ${p.values.length} values but the region has ${bins} bins`);
    const bad = p.values.findIndex((v) => v < 0 || !Number.isInteger(v));
    if (bad >= 0) return setLocal(`value ${bad + 1} (${p.values[bad]}) is not a count of events (a whole number, 0 or more)`);
    setLocal(undefined);
    put.mutate({ region: region.key, observed: p.values }, { onSuccess: onDone });
  }

  const parsed = parseNumberList(text);
  return (
    <form onSubmit={submit} aria-label={`Observed data of ${region.key}`} className="flex flex-col gap-3" noValidate>
      {region.withheld && (
        <p className="rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-sm text-amber-ink">
          Data withheld while blinded: the counts of this signal region are not shown to anyone. You may replace or clear them; what you type is not shown back.
        </p>
      )}
      {put.error && <FormError error={put.error} />}
      <TextAreaField
        label={`Observed events per bin (${bins} bins)`}
        rows={2}
        value={text}
        onChange={(e) => setText(e.target.value)}
        error={local ?? fieldError({}, put.error, 'observed')}
        hint={parsed.values && parsed.values.length ? `${parsed.values.length} of ${bins} values; ${sum(parsed.values).toLocaleString('en-GB')} events in total` : 'Whole numbers, comma separated or one per line.'}
      />
      <div className="flex flex-wrap gap-2">
        <Button type="submit" variant="primary" busy={put.isPending && put.variables?.observed !== null}>
          Save observed data
        </Button>
        {(region.observed || region.withheld) && (
          <Button variant="danger" busy={put.isPending && put.variables?.observed === null} onClick={() => put.mutate({ region: region.key, observed: null }, { onSuccess: onDone })}>
            Clear observed data
          </Button>
        )}
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
