import type { ReactNode } from 'react';
import { Badge } from '../ui/badge';
import type { RowData } from '@tanstack/react-table';
import { DataTable, dataColumns, type DataColumn } from '../ui/data-table';
import { decimalsFor, formatFixed, formatSigned } from '../../lib/stats-format';

/**
 * What a refit of a stored fit's configuration changed (an upload's check, a pruning preview): μ̂
 * and σ_μ before and after, and the parameters whose pull or constraint moved. The numbers come
 * from the server as they are; a side the compared fit may not show is null and drawn as "–".
 */

export type Change = { before: number | null; after: number | null };

/** after − before, or null when either side is missing. */
export function delta(c: Change): number | null {
  return c.before === null || c.after === null ? null : c.after - c.before;
}

/**
 * "0.281 → 0.416": the arrow is read as "to". A side that does not exist is named: a parameter
 * the refit no longer has (its effects were all left out) or one the compared fit did not have.
 */
export function BeforeAfter({ change, decimals = 2 }: { change: Change; decimals?: number }) {
  const missing = (which: 'before' | 'after') => (
    <span className="font-normal text-ink-muted italic" title={which === 'after' ? 'Not a parameter of the refit: every effect of it was left out' : 'Not a parameter of the compared fit'}>
      {which === 'after' ? 'removed' : 'new'}
    </span>
  );
  return (
    <span className="whitespace-nowrap tabular-nums">
      {change.before === null && change.after !== null ? missing('before') : formatFixed(change.before, decimals)}
      <span aria-hidden className="px-1 text-ink-muted">
        →
      </span>
      <span className="sr-only"> to </span>
      <span className="font-semibold">{change.after === null && change.before !== null ? missing('after') : formatFixed(change.after, decimals)}</span>
    </span>
  );
}

/** The pull moved by at least this much is drawn in plum (the server lists every move above 0.1). */
const LARGE = 0.5;

function changeColumns<T extends RowData>(label: string, of: (row: T) => Change, meaning: string): DataColumn<T>[] {
  const col = dataColumns<T>();
  return [
    col.accessor((r) => of(r).before, {
      id: `${label}-before`,
      header: `${label} before`,
      meta: { numeric: true, nowrap: true, cellTitle: `${meaning} in the compared fit` },
      cell: (c) => formatFixed(c.getValue(), 2),
    }),
    col.accessor((r) => of(r).after, {
      id: `${label}-after`,
      header: 'after',
      meta: { numeric: true, nowrap: true, cellTitle: `${meaning} in the refit`, cellClass: 'font-semibold' },
      cell: (c) => formatFixed(c.getValue(), 2),
    }),
    col.accessor((r) => delta(of(r)), {
      id: `${label}-delta`,
      header: 'Δ',
      sortFn: 'basic',
      sortUndefined: 'last',
      meta: {
        numeric: true,
        nowrap: true,
        headerTitle: `Change of the ${label.toLowerCase()}: after − before`,
        cellTitle: (r) => (delta(of(r)) === null ? `${meaning} exists on one side only` : `${meaning}: after − before`),
        cellClass: (r) => {
          const d = delta(of(r));
          return d !== null && Math.abs(d) >= LARGE ? 'font-semibold text-plum' : '';
        },
      },
      cell: (c) => (c.getValue() === null ? <span className="text-ink-muted">one side</span> : formatSigned(c.getValue(), 2)),
    }),
  ];
}

export type MovedParameter = { name: string; pull: Change; constraint: Change };

const moved = dataColumns<MovedParameter>();
const movedColumns = [
  moved.accessor('name', { header: 'Parameter', sortFn: 'alphanumeric', meta: { nowrap: true }, cell: (c) => <span className="font-mono text-xs">{c.getValue()}</span> }),
  ...changeColumns<MovedParameter>('Pull', (p) => p.pull, 'Pull (θ̂ − θ₀)/σ_prior'),
  ...changeColumns<MovedParameter>('Constraint', (p) => p.constraint, 'Constraint σ̂/σ_prior'),
];

/** Narrow: the name, and pull and constraint each as "before → after". */
const compactColumns = [
  movedColumns[0],
  moved.accessor((p) => delta(p.pull), {
    id: 'pull',
    header: 'Pull',
    sortFn: 'basic',
    sortUndefined: 'last',
    meta: { numeric: true, nowrap: true, headerTitle: 'Pull (θ̂ − θ₀)/σ_prior: compared fit → refit', cellTitle: 'Pull (θ̂ − θ₀)/σ_prior: compared fit → refit' },
    cell: (c) => <BeforeAfter change={c.row.original.pull} />,
  }),
  moved.accessor((p) => delta(p.constraint), {
    id: 'constraint',
    header: 'Constraint',
    sortFn: 'basic',
    sortUndefined: 'last',
    meta: { numeric: true, nowrap: true, headerTitle: 'Constraint σ̂/σ_prior: compared fit → refit', cellTitle: 'Constraint σ̂/σ_prior: compared fit → refit' },
    cell: (c) => <BeforeAfter change={c.row.original.constraint} />,
  }),
];

const largestMove = (p: MovedParameter) => Math.max(Math.abs(delta(p.pull) ?? Infinity), Math.abs(delta(p.constraint) ?? Infinity));

/** Every parameter whose pull or constraint moved by more than 0.1, the largest move first. */
export function MovedParameters({ parameters, label, empty, compact = false }: { parameters: MovedParameter[]; label: string; empty: ReactNode; compact?: boolean }) {
  if (!parameters.length) return <p className="text-sm text-ink-muted">{empty}</p>;
  const sorted = [...parameters].sort((a, b) => largestMove(b) - largestMove(a) || a.name.localeCompare(b.name));
  return <DataTable columns={compact ? compactColumns : movedColumns} data={sorted} getRowId={(p) => p.name} label={label} rowHeader="name" frame="plain" sortable frameClass="max-h-[22rem]" />;
}

/**
 * μ̂ and σ_μ before and after, each with its change: μ̂'s in units of the compared fit's σ_μ, σ_μ's
 * in percent. When the compared fit holds μ (control regions only) or hides it, says so instead.
 */
export function SignalStrengthChange({ mu, muError }: { mu: (Change & { fixed: boolean }) | null; muError: Change | null }) {
  if (!mu || mu.before === null || mu.after === null)
    return (
      <p className="rounded-md border border-rule bg-paper-sunk/50 px-3 py-2 text-sm text-ink-soft">
        {mu?.fixed
          ? 'The compared fit holds μ (it fits the control regions only), so there is no μ̂ or σ_μ to compare: read the pulls and constraints.'
          : 'The compared fit hides μ while the analysis is blinded, so μ̂ and σ_μ are not shown: read the pulls and constraints.'}
      </p>
    );
  const sigma = muError?.before ?? null;
  const decimals = decimalsFor(sigma) + 1;
  const dMu = delta(mu);
  const dSigma = muError ? delta(muError) : null;
  const relative = dSigma !== null && sigma ? (100 * dSigma) / sigma : null;
  return (
    <dl className="grid grid-cols-[auto_auto_1fr] items-baseline gap-x-4 gap-y-1 text-base" aria-label="Signal strength before and after">
      <dt className="text-ink-muted" title="Best-fit signal strength">
        μ̂
      </dt>
      <dd title="μ̂ in the compared fit → μ̂ in the refit">
        <BeforeAfter change={mu} decimals={decimals} />
      </dd>
      <dd className="text-sm text-ink-soft tabular-nums" title="Change of μ̂, and the same in units of the compared fit's σ_μ">
        {formatSigned(dMu, decimals)}
        {dMu !== null && sigma ? ` (${formatSigned(dMu / sigma, 2)} σ_μ)` : ''}
      </dd>
      <dt className="text-ink-muted" title="Total uncertainty on μ (symmetric, from the Hessian)">
        σ_μ
      </dt>
      <dd title="σ_μ in the compared fit → σ_μ in the refit">{muError ? <BeforeAfter change={muError} decimals={decimals} /> : '–'}</dd>
      <dd className="text-sm text-ink-soft tabular-nums" title="Change of σ_μ, and the same in percent of the compared fit's σ_μ">
        {formatSigned(dSigma, decimals)}
        {relative !== null ? ` (${formatSigned(relative, 1)} %)` : ''}
      </dd>
    </dl>
  );
}

/** A refit's warnings beside its state: "no warnings", or each warning in a list the reader opens. */
export function RefitWarnings({ warnings }: { warnings: string[] }) {
  if (!warnings.length) return <span title="The refit's report has no warning">no warnings</span>;
  return (
    <details className="text-amber-ink">
      <summary className="cursor-pointer font-medium">
        {warnings.length} warning{warnings.length > 1 ? 's' : ''}
      </summary>
      <ul className="mt-1 list-disc pl-5" aria-label="Warnings of the refit">
        {warnings.map((w) => (
          <li key={w}>{w}</li>
        ))}
      </ul>
    </details>
  );
}

/**
 * The state of a check's refit in words, beside its numbers (only a converged refit has any).
 * `change` says what was refitted, e.g. "with this upload" or "without the selection".
 */
export function RefitStateBadge({ state, change }: { state: 'running' | 'done' | 'failed' | 'withheld'; change: string }) {
  switch (state) {
    case 'running':
      return (
        <Badge tone="amber" title={`The server is refitting the compared fit's configuration ${change}`}>
          <span aria-hidden className="size-2.5 animate-spin rounded-full border-2 border-current border-r-transparent" />
          Refitting
        </Badge>
      );
    case 'done':
      return (
        <Badge tone="teal" title={`The refit ${change} reached the minimiser's stopping rule and its covariance is positive definite`}>
          Refit converged
        </Badge>
      );
    case 'failed':
      return (
        <Badge tone="danger" title="The refit did not give a result: no number is shown">
          Refit failed
        </Badge>
      );
    case 'withheld':
      return (
        <Badge tone="plum" title="Blinding: the compared fit read a region that is blinded now">
          Withheld
        </Badge>
      );
  }
}
