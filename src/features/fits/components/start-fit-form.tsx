import { useId, useState, type ReactNode } from 'react';
import { fitOptionsSchema, type FitOptionsInput } from '@shared/schemas/fit';
import type { FitSummary, ModelVersion } from '@shared/schemas/fits';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { CheckboxField, SelectField, TextField } from '../../../components/ui/field';
import { isApiRequestError } from '../../../lib/api-client';
import { fieldError, issueAt } from '../../../lib/form-issues';
import { variantInWords } from '../../../lib/fits';
import { useStartFit } from '../api/start-fit';
import { emptyVariant, variantOptions, type DraftProblems, type VariantDraft } from '../variant-draft';
import { VariantFields, type FitChoices } from './variant-fields';

type Dataset = 'observed' | 'asimov' | 'control';
type Impacts = 'none' | 'quick' | 'full';

function Radio({ name, value, checked, onChange, disabled, label, hint }: { name: string; value: string; checked: boolean; onChange: () => void; disabled?: boolean; label: ReactNode; hint?: ReactNode }) {
  const id = useId();
  return (
    <div className="flex items-start gap-2">
      <input id={id} type="radio" name={name} value={value} checked={checked} onChange={onChange} disabled={disabled} className="mt-0.5 size-4 accent-teal" aria-describedby={hint ? `${id}-hint` : undefined} />
      <div>
        <label htmlFor={id} className={`text-sm ${disabled ? 'text-ink-muted' : 'text-ink'}`}>
          {label}
        </label>
        {hint && (
          <p id={`${id}-hint`} className="text-xs text-ink-muted">
            {hint}
          </p>
        )}
      </div>
    </div>
  );
}

const noChoices: FitChoices = { parameters: [], systematics: [], groups: [], regions: [] };

/**
 * The pair of parameters of interest whose 2D contour the fit draws: two selects over μ and the
 * declared ones, each with "none". Disabled, with the reason, where the server would refuse it.
 */
function ContourFields({
  pois,
  a,
  b,
  onChange,
  refused,
  error,
}: {
  pois: { key: string; label: string }[];
  a: string;
  b: string;
  onChange: (a: string, b: string) => void;
  refused: string | null;
  error: string | undefined;
}) {
  const hintId = useId();
  const all = [{ key: 'mu', label: 'signal strength' }, ...pois];
  const options = (other: string) =>
    all.map((p) => (
      <option key={p.key} value={p.key} disabled={p.key === other}>
        {p.label} ({p.key === 'mu' ? 'μ' : p.key})
      </option>
    ));
  return (
    <fieldset className="flex flex-col gap-2" disabled={!!refused} aria-describedby={hintId}>
      <legend className="mb-1 text-xs font-semibold text-ink-soft">Contour of two parameters of interest</legend>
      <div className="grid grid-cols-2 gap-2">
        <SelectField label="First (across)" value={refused ? '' : a} onChange={(e) => onChange(e.target.value, b === e.target.value ? '' : b)} error={error}>
          <option value="">none</option>
          {options(b)}
        </SelectField>
        <SelectField label="Second (up)" value={refused ? '' : b} onChange={(e) => onChange(a, e.target.value)}>
          <option value="">none</option>
          {options(a)}
        </SelectField>
      </div>
      <p id={hintId} className="text-xs text-ink-muted">
        {refused ?? 'Optional. Which pairs of the two values the data allow together, at 68.27 % and 95 %: a grid of fits with both held, the rest refitted. Takes longer.'}
      </p>
    </fieldset>
  );
}

/**
 * Start a fit on a frozen version. While the analysis is blinded the observed data may be fitted
 * in the control regions only, or in every region with μ hidden; the choices say so, and the
 * server, which decides, names the field of anything it refuses.
 */
export function StartFitForm({
  slug,
  versions,
  blinded,
  overConstraintThreshold,
  choices = noChoices,
  onStarted,
}: {
  slug: string;
  versions: ModelVersion[];
  blinded: boolean;
  overConstraintThreshold: number;
  /** names the variant fields suggest */
  choices?: FitChoices;
  onStarted?: (fit: FitSummary) => void;
}) {
  const start = useStartFit(slug);
  const datasetErrorId = useId();
  const [variantOpen, setVariantOpen] = useState(false);
  const [version, setVersion] = useState<number | null>(versions[0]?.number ?? null);
  const [label, setLabel] = useState('');
  const [dataset, setDataset] = useState<Dataset>(blinded ? 'asimov' : 'observed');
  const [asimovMu, setAsimovMu] = useState('1');
  const [impacts, setImpacts] = useState<Impacts>('full');
  const [scan, setScan] = useState(true);
  const [limit, setLimit] = useState(false);
  const [expected, setExpected] = useState(true);
  const [contourA, setContourA] = useState('');
  const [contourB, setContourB] = useState('');
  const [variant, setVariant] = useState<VariantDraft>(emptyVariant);
  const [problems, setProblems] = useState<DraftProblems>({});
  const [localError, setLocalError] = useState<string | null>(null);
  const chosen = version ?? versions[0]?.number ?? null;
  // while blinded, observed data in every region only with μ hidden
  const effectiveDataset: Dataset = blinded && dataset === 'observed' && !variant.hiddenMu ? 'asimov' : dataset;
  // μ held (control regions only) or hidden: no scan of μ and no limit
  const noMu = effectiveDataset === 'control' || variant.hiddenMu;
  const parsedVariant = fitOptionsSchema.safeParse(variantOptions(variant).options);
  const variantWords = parsedVariant.success ? variantInWords(parsedVariant.data) : ['being edited'];
  const pois = choices.pois ?? [];
  // the server refuses a contour when μ is held (control regions only) or hidden
  const contourRefused = effectiveDataset === 'control' ? 'Not for a fit of the control regions alone: μ is held there.' : variant.hiddenMu ? 'Not with μ hidden: a contour is computed from μ̂.' : null;
  const contour: [string, string] | null = !contourRefused && contourA && contourB && contourA !== contourB ? [contourA, contourB] : null;

  if (versions.length === 0) return <p className="text-sm text-ink-muted">Freeze a model version first: a fit always runs on a frozen version, so its result can be reopened exactly.</p>;

  return (
    <form
      aria-label="Run a fit"
      className="flex flex-col gap-4"
      onSubmit={(e) => {
        e.preventDefault();
        setLocalError(null);
        const mu = Number(asimovMu);
        if (effectiveDataset === 'asimov' && !Number.isFinite(mu)) {
          setLocalError('The Asimov signal strength must be a number.');
          return;
        }
        if (chosen === null) return;
        const v = variantOptions(variant);
        setProblems(v.problems);
        if (Object.keys(v.problems).length) {
          setLocalError('Some variant fields need attention; see below.');
          setVariantOpen(true);
          return;
        }
        const options: FitOptionsInput = {
          ...v.options,
          dataset: effectiveDataset === 'asimov' ? 'asimov' : 'observed',
          asimovMu: effectiveDataset === 'asimov' ? mu : 1,
          controlOnly: effectiveDataset === 'control',
          impacts,
          scan: noMu ? false : scan,
          limit: noMu ? false : limit,
          expected,
          overConstraintThreshold,
          ...(contour ? { contour } : {}),
        };
        if (pois.length && !contourRefused && (contourA || contourB) && !contour) {
          setLocalError('Choose two different parameters of interest for the contour, or “none”.');
          return;
        }
        start.mutate({ version: chosen, label: label.trim(), options }, {
            onSuccess: (fit) => onStarted?.(fit),
            // a refusal of a variant field opens the section that holds it
            onError: (error) => {
              if (isApiRequestError(error) && error.issues.some((i) => i.path[0] === 'options' && !['dataset', 'asimovMu', 'controlOnly', 'impacts', 'scan', 'limit', 'expected', 'contour'].includes(String(i.path[1]))))
                setVariantOpen(true);
            },
          });
      }}
    >
      <FormError error={start.error} />
      {localError && (
        <p role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
          {localError}
        </p>
      )}
      <div className="grid gap-3">
        <SelectField label="Model version" value={chosen ?? ''} onChange={(e) => setVersion(Number(e.target.value))} error={fieldError({}, start.error, 'version')}>
          {versions.map((v) => (
            <option key={v.number} value={v.number}>
              Version {v.number}
              {v.note ? `: ${v.note.slice(0, 40)}` : ''}
            </option>
          ))}
        </SelectField>
        <TextField label="Label" value={label} maxLength={200} onChange={(e) => setLabel(e.target.value)} placeholder="e.g. Asimov, all systematics" error={fieldError({}, start.error, 'label')} />
      </div>

      <fieldset className="flex flex-col gap-2" aria-describedby={issueAt(start.error, ['options', 'dataset']) ? datasetErrorId : undefined}>
        <legend className="mb-1 text-xs font-semibold text-ink-soft">Dataset</legend>
        {blinded && (
          <p className="rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-xs text-amber-ink">
            The analysis is blinded: observed data may be fitted in the control regions only, or in every region with μ hidden (Variant below), and the signal regions' counts
            stay on the server. Fit an Asimov dataset to see the expected result everywhere.
          </p>
        )}
        <Radio
          name="dataset"
          value="observed"
          checked={effectiveDataset === 'observed'}
          onChange={() => setDataset('observed')}
          disabled={blinded && !variant.hiddenMu}
          label="Observed data, all regions"
          hint={blinded ? (variant.hiddenMu ? 'Allowed while blinded because μ is hidden.' : 'Not while the analysis is blinded, unless μ is hidden (Variant below).') : undefined}
        />
        <div className="flex flex-wrap items-center gap-2">
          <Radio
            name="dataset"
            value="asimov"
            checked={effectiveDataset === 'asimov'}
            onChange={() => setDataset('asimov')}
            label="Pre-fit Asimov dataset"
            hint="The expectation itself as data: θ = 0, γ = 1, normalisations at their start, signal at the μ you choose."
          />
          <label className="flex items-center gap-1 text-sm text-ink-soft">
            at μ =
            <input
              type="number"
              step="any"
              value={asimovMu}
              onChange={(e) => {
                setAsimovMu(e.target.value);
                setDataset('asimov');
              }}
              aria-label="Signal strength of the Asimov dataset"
              className="w-20 rounded-md border border-rule-strong bg-paper-raised px-2 py-1 text-sm tabular-nums"
            />
          </label>
        </div>
        <Radio
          name="dataset"
          value="control"
          checked={effectiveDataset === 'control'}
          onChange={() => setDataset('control')}
          label="Observed data, control regions only"
          hint="μ is held at its start value; the fit measures the backgrounds and nuisance parameters from the control regions."
        />
        {issueAt(start.error, ['options', 'dataset']) && (
          <p id={datasetErrorId} className="text-xs font-medium text-danger">
            {issueAt(start.error, ['options', 'dataset'])}
          </p>
        )}
      </fieldset>

      <details className="group rounded-md border border-rule px-3 py-2" open={variantOpen} onToggle={(e) => setVariantOpen((e.target as HTMLDetailsElement).open)}>
        <summary className="cursor-pointer text-xs font-semibold text-ink-soft">
          Variant: <span className="font-normal text-ink">{variantWords.length ? variantWords.join(' · ') : 'the nominal fit'}</span>
        </summary>
        <div className="mt-2">
          <VariantFields
            draft={variant}
            onChange={(d) => {
              setVariant(d);
              if (d.hiddenMu && !variant.hiddenMu) setDataset('observed');
            }}
            choices={choices}
            blinded={blinded}
            error={start.error}
            problems={problems}
          />
        </div>
      </details>

      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-xs font-semibold text-ink-soft">Impacts on μ̂</legend>
        <Radio name="impacts" value="none" checked={impacts === 'none'} onChange={() => setImpacts('none')} label="None" />
        <Radio name="impacts" value="quick" checked={impacts === 'quick'} onChange={() => setImpacts('quick')} label="Quick" hint="ρ(μ, θ)·σ_μ from the covariance: instant, an estimate only." />
        <Radio
          name="impacts"
          value="full"
          checked={impacts === 'full'}
          onChange={() => setImpacts('full')}
          label="Full"
          hint="Two refits per parameter with θ fixed at θ̂ ± σ̂ (post-fit) and two at θ̂ ± 1 (pre-fit). Takes longer."
        />
      </fieldset>

      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-xs font-semibold text-ink-soft">Also compute</legend>
        <CheckboxField
          label="Profile-likelihood scan of μ"
          checked={!noMu && scan}
          disabled={noMu}
          onChange={(e) => setScan(e.target.checked)}
          hint="q(μ) on a grid, giving asymmetric 68 % and 95 % intervals."
        />
        <CheckboxField
          label="95 % CL upper limit on μ (CLs)"
          checked={!noMu && limit}
          disabled={noMu}
          onChange={(e) => setLimit(e.target.checked)}
          hint="Observed and expected, with the ±1σ and ±2σ bands of the expected limit."
        />
        <CheckboxField label="Expected significance" checked={expected} onChange={(e) => setExpected(e.target.checked)} hint="Z on the pre-fit Asimov dataset at μ = 1." />
      </fieldset>

      {pois.length > 0 && (
        <ContourFields
          pois={pois}
          a={contourA}
          b={contourB}
          onChange={(a, b) => {
            setContourA(a);
            setContourB(b);
          }}
          refused={contourRefused}
          error={issueAt(start.error, ['options', 'contour'])}
        />
      )}

      <p className="text-xs text-ink-muted">
        Nuisance parameters whose post-fit width falls below {overConstraintThreshold} of their prior will be flagged as over-constrained (the analysis's setting).
      </p>
      <div>
        <Button type="submit" variant="primary" busy={start.isPending}>
          Run the fit
        </Button>
      </div>
    </form>
  );
}
