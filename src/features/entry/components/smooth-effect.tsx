import { useEffect, useRef, useState } from 'react';
import { scaleLinear } from 'd3-scale';
import { curveStepAfter, line } from 'd3-shape';
import { smoothRequestSchema, type EntryDetail, type SmoothPreview, type SmoothRequest } from '@shared/schemas/register';
import { BottomAxis, LeftAxis } from '../../../components/charts/axes';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { SegmentedField } from '../../../components/ui/segmented-field';
import { formatDateTime, formatEdge } from '../../../lib/format';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { theme } from '../../../lib/palette';
import { useSmoothEffect } from '../api/smooth-effect';
import { Warnings } from './effect-card';
import { PlotLabel } from '../../../components/charts/plot-label';

type Effect = EntryDetail['effects'][number];
type Method = 'median-hanning' | 'local-regression';

/** How an effect was smoothed, in words. */
export function smoothingInWords(s: { method: string; params: Record<string, number> }): string {
  if (s.method === 'median-hanning') return 'running medians of three with Hanning';
  if (s.method === 'local-regression') return `local regression over ${s.params.window} bins with ${s.params.iterations} robustness iteration${s.params.iterations === 1 ? '' : 's'}`;
  return s.method;
}

const W = 320;
const H = 132;
const M = { left: 44, right: 18, top: 24, bottom: 20 };

/** One side's relative shift (ν − ν⁰)/ν⁰ per bin, as it is now (dashed) and smoothed (solid). */
export function BeforeAfterChart({ nominal, edges, before, after, side, unit = '' }: { nominal: number[]; edges: number[]; before: number[]; after: number[]; side: 'up' | 'down'; unit?: string }) {
  const bins = edges.length - 1;
  if (bins < 1) return null;
  const rel = (v: number[]) => nominal.map((n, b) => (n > 0 && v[b] !== undefined ? (v[b] - n) / n : null));
  const was = rel(before);
  const now = rel(after);
  const all = [...was, ...now].filter((r): r is number => r !== null);
  const m = Math.max(0.005, ...all.map(Math.abs)) * 1.2;
  const x = scaleLinear().domain([edges[0], edges[bins]]).range([M.left, W - M.right]);
  const y = scaleLinear().domain([-m, m]).range([H - M.bottom, M.top]).nice(4);
  const step = (rs: (number | null)[]) =>
    line<{ x: number; r: number | null }>()
      .defined((p) => p.r !== null)
      .x((p) => x(p.x))
      .y((p) => y(p.r ?? 0))
      .curve(curveStepAfter)(Array.from({ length: bins + 1 }, (_, i) => ({ x: edges[i], r: rs[Math.min(i, bins - 1)] }))) ?? '';
  const colour = side === 'up' ? theme.teal : theme.plum;
  const pct = (r: number | null) => (r === null ? 'nominal is 0' : `${r >= 0 ? '+' : '−'}${Math.abs(r * 100).toFixed(2)} %`);
  const largest = (rs: (number | null)[]) => Math.max(0, ...rs.filter((r): r is number => r !== null).map(Math.abs));
  const name = side === 'up' ? 'Up' : 'Down';
  return (
    <svg
      viewBox={`0 0 ${W} ${H}`}
      className="h-auto w-full max-w-[24rem]"
      role="img"
      aria-label={`${name} shift relative to the nominal per bin, as it is now and smoothed: largest ${(largest(was) * 100).toFixed(2)} % now, ${(largest(now) * 100).toFixed(2)} % smoothed`}
    >
      <PlotLabel x={M.left} y={13} />
      <line x1={M.left} x2={W - M.right} y1={y(0)} y2={y(0)} stroke={theme.inkMuted} strokeWidth={1} />
      <path d={step(was)} fill="none" stroke={theme.inkMuted} strokeWidth={1.4} strokeDasharray="4 3" />
      <path d={step(now)} fill="none" stroke={colour} strokeWidth={2} />
      <LeftAxis scale={y} x={M.left} ticks={4} format={(r) => `${(r * 100).toFixed(m < 0.05 ? 1 : 0)} %`} />
      <BottomAxis scale={x} y={H - M.bottom} ticks={4} format={formatEdge} />
      {Array.from({ length: bins }, (_, b) => (
        <rect key={b} x={x(edges[b])} y={M.top} width={Math.max(0, x(edges[b + 1]) - x(edges[b]))} height={H - M.top - M.bottom} fill="transparent">
          <title>{`Bin ${b + 1}: ${formatEdge(edges[b])}–${formatEdge(edges[b + 1])}${unit ? ` ${unit}` : ''}\n${name} now: ${pct(was[b])}\n${name} smoothed: ${pct(now[b])}`}</title>
        </rect>
      ))}
    </svg>
  );
}

function Comparison({ preview, unit }: { preview: SmoothPreview; unit?: string }) {
  return (
    <section aria-label="Before and after smoothing" className="flex flex-col gap-2 rounded-md border-2 border-dashed border-teal/50 bg-teal-soft/20 px-3 py-2">
      <h4 className="text-xs font-semibold">Preview: nothing is saved until you press Save</h4>
      <p className="flex flex-wrap gap-x-3 text-2xs text-ink-muted" aria-hidden>
        <span className="inline-flex items-center gap-1">
          <svg viewBox="0 0 16 6" className="h-1.5 w-4">
            <line x1={0} x2={16} y1={3} y2={3} stroke={theme.inkMuted} strokeWidth={1.6} strokeDasharray="4 3" />
          </svg>
          as it is now
        </span>
        <span className="inline-flex items-center gap-1">
          <svg viewBox="0 0 16 6" className="h-1.5 w-4">
            <line x1={0} x2={16} y1={3} y2={3} stroke={theme.teal} strokeWidth={2} />
          </svg>
          up smoothed
        </span>
        <span className="inline-flex items-center gap-1">
          <svg viewBox="0 0 16 6" className="h-1.5 w-4">
            <line x1={0} x2={16} y1={3} y2={3} stroke={theme.plum} strokeWidth={2} />
          </svg>
          down smoothed
        </span>
        <span>· (ν − ν⁰)/ν⁰ per bin</span>
      </p>
      <div className="grid gap-3 md:grid-cols-2">
        {(['up', 'down'] as const).map((side) => (
          <figure key={side} className="flex flex-col gap-0.5">
            <figcaption className="text-xs font-semibold text-ink-soft">{side === 'up' ? 'Up' : 'Down'}</figcaption>
            <BeforeAfterChart nominal={preview.nominal} edges={preview.edges} before={preview.before[side]} after={preview.after[side]} side={side} unit={unit} />
          </figure>
        ))}
      </div>
      {preview.warnings.length > 0 ? <Warnings warnings={preview.warnings} /> : <p className="text-xs text-ink-muted">No warnings on the smoothed variation.</p>}
    </section>
  );
}

/**
 * Smoothing a shape effect, for those who may upload its variations: choose the method (and the
 * window and iterations of a local regression), preview both sides before and after, then save. A
 * smoothed effect says how it was smoothed and offers to restore the upload.
 */
export function SmoothEffect({ slug, entryKey, effect, unit, open, onOpen }: { slug: string; entryKey: string; effect: Effect; unit?: string; open: boolean; onOpen: (open: boolean) => void }) {
  const filled = effect.nominal.filter((n) => n > 0).length;
  const [method, setMethod] = useState<Method>('median-hanning');
  const [windowBins, setWindowBins] = useState(String(Math.min(filled, 5)));
  const [iterations, setIterations] = useState('2');
  const [local, setLocal] = useState<FieldErrors>({});
  const [preview, setPreview] = useState<SmoothPreview | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const smooth = useSmoothEffect(slug, entryKey, effect.id);
  const restoring = smooth.isPending && smooth.variables?.method === 'restore';
  const name = `${effect.region} × ${effect.process}`;
  // Opening moves the focus into the form; closing gives it back to the button.
  const panel = useRef<HTMLElement>(null);
  const opener = useRef<HTMLDivElement>(null);
  const wasOpen = useRef(open);
  useEffect(() => {
    if (open && !wasOpen.current) panel.current?.querySelector<HTMLElement>('input')?.focus();
    if (!open && wasOpen.current) opener.current?.querySelector('button')?.focus();
    wasOpen.current = open;
  }, [open]);

  const changed = () => {
    setPreview(null);
    setLocal({});
    smooth.reset();
  };
  const body = (save: boolean): SmoothRequest | null => {
    const raw = method === 'median-hanning' ? { method, save } : { method, window: Number(windowBins), iterations: Number(iterations), save };
    const checked = checkWith(smoothRequestSchema, raw);
    if (!checked.ok) {
      setLocal(checked.errors);
      return null;
    }
    setLocal({});
    return raw as SmoothRequest;
  };
  const run = (save: boolean) => {
    const b = body(save);
    if (!b) return;
    setDone(null);
    smooth.mutate(b, {
      onSuccess: (result) => {
        if (!result.saved) return setPreview(result);
        setPreview(null);
        onOpen(false);
        setDone(`Saved, smoothed with ${smoothingInWords({ method: b.method, params: b.method === 'local-regression' ? { window: b.window, iterations: b.iterations ?? 2 } : {} })}, as a new revision.`);
      },
    });
  };
  const restore = () => {
    setDone(null);
    smooth.mutate({ method: 'restore', save: true }, { onSuccess: () => setDone('The variation as uploaded is back, as a new revision.') });
  };
  const close = () => {
    changed();
    onOpen(false);
  };

  return (
    <div className="flex flex-col gap-2">
      {effect.smoothing && (
        <div className="flex flex-wrap items-start justify-between gap-2 rounded-md border border-teal/30 bg-teal-soft/40 px-2 py-1.5 text-xs text-teal-ink">
          <p>
            <span className="font-semibold">Smoothed</span> with {smoothingInWords(effect.smoothing)} by {effect.smoothing.by}, {formatDateTime(effect.smoothing.at)}. The variation as uploaded is kept.
          </p>
          <ConfirmButton
            align="end"
            label="Restore the upload"
            ariaLabel={`Restore the upload of ${name}`}
            question="Bring back the variation as uploaded?"
            confirmLabel="Restore"
            busy={restoring}
            error={smooth.variables?.method === 'restore' ? smooth.error : null}
            onConfirm={restore}
          />
        </div>
      )}
      {done && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-2 py-1.5 text-xs text-teal-ink">
          {done}
        </p>
      )}
      {!open ? (
        <div ref={opener}>
          <Button size="sm" variant="secondary" aria-label={`Smooth ${name}…`} onClick={() => onOpen(true)}>
            Smooth…
          </Button>
        </div>
      ) : (
        <section ref={panel} aria-label={`Smooth ${name}`} className="flex flex-col gap-3 rounded-md border border-rule bg-paper px-3 py-2.5">
          <h4 className="text-sm font-semibold">Smooth {name}</h4>
          <p className="text-xs text-ink-muted">
            The relative shift (ν − ν⁰)/ν⁰ of each side is smoothed across the {filled} bins with a nominal above 0, always starting from the variation as uploaded, and turned back into yields
            (clipped at 0).
          </p>
          <FormError error={smooth.variables?.method === 'restore' ? null : smooth.error} />
          <div className="flex flex-wrap items-start gap-x-5 gap-y-3">
            <SegmentedField<Method>
              legend="Method"
              value={method}
              onChange={(m) => {
                setMethod(m);
                changed();
              }}
              options={[
                { value: 'median-hanning', label: 'Running medians with Hanning', title: 'Running medians of three until they settle, the end bins by their own rule, then weights ¼, ½, ¼. No parameters; needs 3 filled bins.' },
                { value: 'local-regression', label: 'Local regression', title: 'A weighted straight line through the nearest bins at each bin centre, with robustness iterations.' },
              ]}
            />
            {method === 'local-regression' && (
              <>
                <TextField
                  label="Window (bins)"
                  type="number"
                  min={3}
                  max={filled}
                  step={1}
                  value={windowBins}
                  onChange={(e) => {
                    setWindowBins(e.target.value);
                    changed();
                  }}
                  hint={`Bins used at each point: 3 to ${filled}`}
                  error={fieldError(local, smooth.error, 'window')}
                  className="w-36"
                />
                <TextField
                  label="Robustness iterations"
                  type="number"
                  min={0}
                  max={10}
                  step={1}
                  value={iterations}
                  onChange={(e) => {
                    setIterations(e.target.value);
                    changed();
                  }}
                  hint="0 to 10; each lowers the weight of outlying bins"
                  error={fieldError(local, smooth.error, 'iterations')}
                  className="w-44"
                />
              </>
            )}
          </div>
          <div className="flex flex-wrap gap-2">
            <Button variant="primary" size="sm" aria-label={`Preview the smoothing of ${name}`} onClick={() => run(false)} busy={smooth.isPending && smooth.variables?.save === false}>
              Preview
            </Button>
            {preview && (
              <Button variant="primary" size="sm" onClick={() => run(true)} busy={smooth.isPending && smooth.variables?.save === true && smooth.variables.method !== 'restore'}>
                Save the smoothed effect
              </Button>
            )}
            <Button variant="ghost" size="sm" aria-label={`Cancel the smoothing of ${name}`} onClick={close}>
              Cancel
            </Button>
          </div>
          {preview && <Comparison preview={preview} unit={unit} />}
        </section>
      )}
    </div>
  );
}
