import { useId, useState } from 'react';
import { startToysSchema, TOY_LIMITS, type StartToys, type ToyRun } from '@shared/schemas/toys';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { formatCount } from '../../../lib/format';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { formatFixed } from '../../../lib/stats-format';
import { useStartToys } from '../api/start-toys';

type Kind = 'best-fit' | 'fixed-mu';

/** An integer typed into a field, or null when it is not one. */
function readInteger(text: string): number | null {
  const t = text.trim();
  return /^-?\d+$/.test(t) ? Number(t) : null;
}

/** The body, or the field messages that stop it; the shared schema checks what is left. */
export function toyRequest(input: { count: string; kind: Kind; mu: string; seed: string; label: string }): { ok: true; body: StartToys } | { ok: false; errors: FieldErrors } {
  const errors: FieldErrors = {};
  const count = readInteger(input.count);
  if (count === null || count < TOY_LIMITS.min || count > TOY_LIMITS.max)
    errors.count = `Ask for a whole number of toys from ${formatCount(TOY_LIMITS.min)} to ${formatCount(TOY_LIMITS.max)}.`;
  const mu = Number(input.mu);
  if (input.kind === 'fixed-mu' && (input.mu.trim() === '' || !Number.isFinite(mu))) errors.hypothesis = 'The signal strength to draw the toys at must be a number.';
  const seed = input.seed.trim() === '' ? undefined : readInteger(input.seed);
  if (seed === null || (seed !== undefined && (seed < 0 || seed > 2 ** 31 - 1))) errors.seed = `A seed is a whole number from 0 to ${formatCount(2 ** 31 - 1)}, or left empty.`;
  if (Object.keys(errors).length > 0) return { ok: false, errors };
  const body: StartToys = {
    count: count!,
    hypothesis: input.kind === 'fixed-mu' ? { kind: 'fixed-mu', mu } : { kind: 'best-fit' },
    ...(seed !== undefined && seed !== null ? { seed } : {}),
    label: input.label.trim(),
  };
  const checked = checkWith(startToysSchema, body);
  return checked.ok ? { ok: true, body } : { ok: false, errors: checked.errors };
}

/**
 * Ask for pseudo-experiments of a converged fit: how many, where they are drawn from (the best
 * fit, or the best fit with μ held at a value), an optional seed and label.
 */
export function StartToysForm({ slug, fitId, muHat, onStarted }: { slug: string; fitId: number; muHat: number | null; onStarted?: (run: ToyRun) => void }) {
  const start = useStartToys(slug, fitId);
  const [count, setCount] = useState('1000');
  const [kind, setKind] = useState<Kind>('best-fit');
  const [mu, setMu] = useState('0');
  const [seed, setSeed] = useState('');
  const [label, setLabel] = useState('');
  const [local, setLocal] = useState<FieldErrors>({});
  const id = useId();
  const muError = fieldError(local, start.error, 'hypothesis');

  return (
    <form
      aria-label="Run pseudo-experiments"
      className="flex flex-col gap-4"
      noValidate
      onSubmit={(e) => {
        e.preventDefault();
        const request = toyRequest({ count, kind, mu, seed, label });
        if (!request.ok) {
          setLocal(request.errors);
          return;
        }
        setLocal({});
        start.mutate(request.body, { onSuccess: (run) => onStarted?.(run) });
      }}
    >
      <FormError error={start.error} />
      <TextField
        label="Number of toys"
        type="number"
        inputMode="numeric"
        min={TOY_LIMITS.min}
        max={TOY_LIMITS.max}
        step={1}
        required
        value={count}
        onChange={(e) => setCount(e.target.value)}
        hint={`${formatCount(TOY_LIMITS.min)} to ${formatCount(TOY_LIMITS.max)}. A p-value near p needs about 10/p toys to have ten beyond it.`}
        error={fieldError(local, start.error, 'count')}
      />
      <fieldset className="flex flex-col gap-2" aria-describedby={muError ? `${id}-mu-error` : undefined}>
        <legend className="mb-1 text-xs font-semibold text-ink-soft">Draw the toys from</legend>
        <div className="flex items-start gap-2">
          <input
            id={`${id}-best`}
            type="radio"
            name={`${id}-hypothesis`}
            value="best-fit"
            checked={kind === 'best-fit'}
            onChange={() => setKind('best-fit')}
            aria-describedby={`${id}-best-hint`}
            className="mt-0.5 size-4 accent-teal"
          />
          <div>
            <label htmlFor={`${id}-best`} className="text-sm text-ink">
              The best fit{muHat !== null ? ` (μ̂ = ${formatFixed(muHat, 3)})` : ''}
            </label>
            <p id={`${id}-best-hint`} className="text-xs text-ink-muted">
              Every parameter at its fitted value: checks the coverage of μ̂ ± σ_μ and the pulls.
            </p>
          </div>
        </div>
        <div className="flex items-start gap-2">
          <input id={`${id}-fixed`} type="radio" name={`${id}-hypothesis`} value="fixed-mu" checked={kind === 'fixed-mu'} onChange={() => setKind('fixed-mu')} className="mt-0.5 size-4 accent-teal" />
          <div className="flex flex-col gap-1">
            <label htmlFor={`${id}-fixed`} className="text-sm text-ink">
              The fit with μ held at a value
            </label>
            <div className="flex items-center gap-1.5">
              <label htmlFor={`${id}-mu`} className="text-sm text-ink-soft">
                μ =
              </label>
              <input
                id={`${id}-mu`}
                type="number"
                step="any"
                aria-label="Signal strength μ to hold the toys at"
                value={mu}
                onChange={(e) => {
                  setMu(e.target.value);
                  setKind('fixed-mu');
                }}
                aria-invalid={muError ? true : undefined}
                aria-describedby={muError ? `${id}-mu-error` : `${id}-mu-hint`}
                className={`w-24 rounded-md border bg-paper-raised px-2 py-1 text-sm tabular-nums ${muError ? 'border-danger' : 'border-rule-strong'}`}
              />
            </div>
            <p id={`${id}-mu-hint`} className="text-xs text-ink-muted">
              The other parameters at their best fit with μ held there. μ = 0 gives the background-only q0 distribution, for the discovery p-value.
            </p>
            {muError && (
              <p id={`${id}-mu-error`} className="text-xs font-medium text-danger">
                {muError}
              </p>
            )}
          </div>
        </div>
      </fieldset>
      <TextField
        label="Seed (optional)"
        type="number"
        inputMode="numeric"
        min={0}
        step={1}
        value={seed}
        onChange={(e) => setSeed(e.target.value)}
        hint="The same seed gives the same toys. Left empty, the server picks one and lists it with the run."
        error={fieldError(local, start.error, 'seed')}
      />
      <TextField
        label="Label (optional)"
        value={label}
        maxLength={200}
        onChange={(e) => setLabel(e.target.value)}
        placeholder="e.g. background-only, 5 000 toys"
        error={fieldError(local, start.error, 'label')}
      />
      <div>
        <Button type="submit" variant="primary" busy={start.isPending}>
          Run the toys
        </Button>
      </div>
    </form>
  );
}
