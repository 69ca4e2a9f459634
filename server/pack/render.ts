import type { FitResult } from '@shared/schemas/fit';
import { COLOURS, contourChart, correlationChart, groupsChart, impactsChart, processColour, pullsChart, regionChart, scanChart, type ImpactRow } from './charts';
import { datasetInWords, esc, num, optionsInWords, plotLabelText, signed, variantInWords, when } from './format';
import type { PackData } from './types';

/**
 * The approval pack as one HTML page: styles inline, charts as inline SVG, no script and no
 * address outside the page, so that it prints and archives as it is. It answers a reviewer's
 * question in order: what exactly was fitted, how, by which code, is it approved, and then
 * the numbers with their convergence beside them.
 */

const STATEMENT =
  'These numbers inform the collaboration’s statistical review and approval; they do not replace it.';

/** Correlation matrices up to this size are drawn; larger ones are listed as their strongest pairs. */
const HEATMAP_LIMIT = 45;
/** Impacts drawn in the ranking chart (the table lists every parameter). */
const IMPACTS_DRAWN = 25;
/** Pulls drawn (the table lists every parameter). */
const PULLS_DRAWN = 80;

const STYLE = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; background: ${COLOURS.paper}; color: ${COLOURS.ink}; font: 14px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; }
main { max-width: 980px; margin: 0 auto; padding: 28px 32px 48px; }
header.pack { border-bottom: 3px solid ${COLOURS.teal}; padding-bottom: 14px; margin-bottom: 8px; }
.kicker { text-transform: uppercase; letter-spacing: .08em; font-size: 11px; color: ${COLOURS.teal}; font-weight: 700; margin: 0; }
h1 { font-size: 24px; margin: 4px 0 2px; }
h2 { font-size: 17px; margin: 28px 0 8px; padding-bottom: 4px; border-bottom: 1px solid ${COLOURS.rule}; break-after: avoid; }
h3 { font-size: 14px; margin: 16px 0 6px; break-after: avoid; }
p { margin: 6px 0; }
.muted { color: ${COLOURS.muted}; }
.labels { font-weight: 600; }
.mono, code { font-family: ui-monospace, "SFMono-Regular", Menlo, Consolas, monospace; font-size: 12px; word-break: break-all; }
.facts { display: grid; grid-template-columns: 190px 1fr; gap: 4px 14px; margin: 8px 0; }
.facts dt { color: ${COLOURS.muted}; }
.facts dd { margin: 0; }
.answers { display: grid; grid-template-columns: repeat(4, 1fr); gap: 10px; margin: 14px 0 4px; }
.answer { background: ${COLOURS.raised}; border: 1px solid ${COLOURS.rule}; border-radius: 6px; padding: 8px 10px; }
.answer b { display: block; font-size: 11px; text-transform: uppercase; letter-spacing: .06em; color: ${COLOURS.muted}; }
.answer span { font-weight: 600; }
.answer span.muted { font-weight: 400; }
.key { font-family: ui-monospace, "SFMono-Regular", Menlo, Consolas, monospace; font-size: 12px; white-space: nowrap; }
.state { display: inline-block; border-radius: 10px; padding: 1px 9px; font-size: 12px; font-weight: 600; border: 1px solid; }
.ok { background: ${COLOURS.tealSoft}; color: #0a5c56; border-color: ${COLOURS.teal}; }
.warn { background: ${COLOURS.amberSoft}; color: #7c4c05; border-color: ${COLOURS.amber}; }
.bad { background: #f6dcd6; color: ${COLOURS.danger}; border-color: ${COLOURS.danger}; }
.note { background: ${COLOURS.raised}; border-left: 4px solid ${COLOURS.amber}; padding: 8px 12px; margin: 10px 0; }
.note.failure { border-left-color: ${COLOURS.danger}; }
.note.calm { border-left-color: ${COLOURS.teal}; }
table { border-collapse: collapse; width: 100%; margin: 8px 0; font-size: 12.5px; background: ${COLOURS.raised}; }
th, td { border-bottom: 1px solid ${COLOURS.rule}; padding: 3px 8px; text-align: left; vertical-align: top; }
thead th { background: ${COLOURS.sunk}; font-weight: 600; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr { break-inside: avoid; }
figure { margin: 12px 0; break-inside: avoid; }
figure svg { max-width: 100%; height: auto; border: 1px solid ${COLOURS.rule}; border-radius: 4px; }
figcaption { font-size: 12px; color: ${COLOURS.muted}; margin-top: 3px; }
.pair { display: grid; grid-template-columns: 1fr 1fr; gap: 12px; }
.thread { margin: 4px 0 0 0; padding-left: 14px; border-left: 2px solid ${COLOURS.rule}; }
.question { margin: 14px 0; break-inside: avoid; }
ul { margin: 4px 0; padding-left: 20px; }
footer { margin-top: 36px; border-top: 3px solid ${COLOURS.teal}; padding-top: 10px; font-weight: 600; }
@media print {
  body { background: #fff; font-size: 11.5px; }
  main { max-width: none; padding: 0; }
  .answer, table, .note { background: #fff; }
  h2 { break-before: auto; }
  .pair { grid-template-columns: 1fr 1fr; }
  @page { size: A4; margin: 14mm; }
}
`;

const table = (head: string[], rows: string[][], numeric: boolean[] = []) =>
  `<table><thead><tr>${head.map((h, i) => `<th${numeric[i] ? ' class="n"' : ''}>${h}</th>`).join('')}</tr></thead><tbody>${
    rows.length ? rows.map((r) => `<tr>${r.map((c, i) => `<td${numeric[i] ? ' class="n"' : ''}>${c}</td>`).join('')}</tr>`).join('') : `<tr><td colspan="${head.length}" class="muted">None.</td></tr>`
  }</tbody></table>`;

const figure = (svgText: string, caption: string) => `<figure>${svgText}<figcaption>${caption}</figcaption></figure>`;

const facts = (pairs: [string, string][]) => `<dl class="facts">${pairs.map(([k, v]) => `<dt>${k}</dt><dd>${v}</dd>`).join('')}</dl>`;

function approvalState(d: PackData, short = false): { text: string; tone: 'ok' | 'warn' | 'bad' } {
  if (!d.version.forApproval) return { text: short ? 'Not for approval' : 'Not put forward for approval', tone: 'warn' };
  if (d.version.override) return { text: short ? 'For approval, with an override' : 'For approval, frozen with open items (convener’s override)', tone: 'warn' };
  return { text: short ? 'For approval, gates held' : 'For approval: every entry accepted, no open question', tone: 'ok' };
}

function fitState(d: PackData): { text: string; tone: 'ok' | 'warn' | 'bad' } {
  const r = d.result;
  if (d.fit.state !== 'succeeded' || !r || r.status !== 'converged') return { text: d.fit.state === 'succeeded' ? 'did not converge' : d.fit.state, tone: 'bad' };
  return r.convergence.warnings.length ? { text: `converged, ${r.convergence.warnings.length} warning${r.convergence.warnings.length === 1 ? '' : 's'}`, tone: 'warn' } : { text: 'converged', tone: 'ok' };
}

const pill = (s: { text: string; tone: string }) => `<span class="state ${s.tone}">${esc(s.text)}</span>`;

function header(d: PackData): string {
  const a = approvalState(d, true);
  const f = fitState(d);
  const fitName = d.fit.label || `Fit ${d.fit.id}`;
  return `<header class="pack">
<p class="kicker">Plumbline · approval pack</p>
<h1>${esc(d.analysis.name)}</h1>
<p><span class="labels">${esc(plotLabelText(d.analysis.plotLabels) || 'No plot labels set')}</span> <span class="muted">· ${esc(fitName)} (fit #${d.fit.id}) · model version ${d.version.number}</span></p>
<div class="answers">
<div class="answer"><b>What was fitted</b><span>Model version ${d.version.number}</span><br><span class="muted">${esc(datasetInWords(d.fit.options))}</span></div>
<div class="answer"><b>How</b><span>${esc(variantInWords(d.fit.options).length ? 'A variant' : 'The nominal fit')}</span><br><span class="muted">${esc(optionsInWords(d.fit.options)[0])}</span></div>
<div class="answer"><b>By which code</b><span>Engine ${esc(d.fit.provenance?.engineVersion ?? 'not recorded')}</span><br><span class="mono muted">${esc(d.fit.provenance ? d.fit.provenance.engineHash.slice(0, 16) + '…' : '—')}</span></div>
<div class="answer"><b>Is it approved?</b>${pill(a)}<br><span class="muted">Fit: </span>${pill(f)}</div>
</div>
<p class="muted">Made ${esc(when(d.generatedAt))} by ${esc(d.generatedBy)}. ${esc(STATEMENT)}</p>
</header>`;
}

function whatWasFitted(d: PackData): string {
  const v = d.version;
  const a = approvalState(d);
  const override = v.override
    ? `<div class="note"><p><b>Convener’s override</b> by ${esc(v.override.by)}: ${esc(v.override.reason)}</p><p>Open items when it was frozen:</p><ul>${v.override.openItems.map((i) => `<li>${esc(i)}</li>`).join('') || '<li>none listed</li>'}</ul></div>`
    : '';
  return `<section><h2>What was fitted: model version ${v.number}</h2>
${facts([
  ['Model version', `${v.number}, frozen ${esc(when(v.createdAt))}${v.note ? ` — “${esc(v.note)}”` : ''}`],
  ['SHA-256 of the version', `<span class="mono">${esc(v.sha256)}</span>`],
  ['Approval state', pill(a)],
  ['Regions in the likelihood', esc(d.result?.model.regionsInFit.join(', ') || (d.fit.state === 'succeeded' ? '—' : 'not recorded for a fit without a result'))],
])}${override}</section>`;
}

function how(d: PackData): string {
  const o = d.fit.options;
  const variant = variantInWords(o);
  const p = d.fit.provenance;
  return `<section><h2>How, and by which code</h2>
${facts([
  ['Fit', `${esc(d.fit.label || `Fit ${d.fit.id}`)} (#${d.fit.id}), started by ${esc(d.fit.createdBy ?? '—')}`],
  ['Dataset', esc(datasetInWords(o))],
  ['Options', esc(optionsInWords(o).join('; '))],
  ['Variant', variant.length ? esc(variant.join('; ')) : 'the nominal fit (no variant)'],
  ['Run', `queued ${esc(when(d.fit.createdAt))}, started ${esc(when(d.fit.startedAt))}, ended ${esc(when(d.fit.finishedAt))}`],
  ['Engine version', esc(p?.engineVersion ?? 'not recorded (fit made before provenance was kept)')],
  ['Engine hash (SHA-256 of its sources)', `<span class="mono">${esc(p?.engineHash ?? '—')}</span>`],
  ['Input SHA-256 (model and options)', `<span class="mono">${esc(p?.inputSha256 ?? '—')}</span>`],
  ['Reproduces', d.fit.reproduces ? `fit #${d.fit.reproduces}` : '—'],
])}</section>`;
}

function convergence(d: PackData): string {
  const r = d.result;
  const f = fitState(d);
  if (!r) {
    return `<section><h2>Convergence</h2><div class="note failure"><p>${pill(f)} ${esc(d.fit.failure ?? 'The fit ended without a result.')}</p><p>No number of this fit is shown: a fit that did not converge has none to report.</p></div></section>`;
  }
  const c = r.convergence;
  const failed = r.status !== 'converged' || d.fit.state !== 'succeeded';
  const rows: [string, string][] = [
    ['Status', pill(f)],
    ['Newton iterations', String(c.iterations)],
  ];
  if (!failed) {
    rows.push(['Newton decrement at the minimum', num(c.decrement)], ['Condition number (scaled Hessian)', num(c.conditionNumber)]);
    if (c.refits) rows.push(['Conditional refits', `${c.refits.warm} warm, ${c.refits.newton} Newton, ${c.refits.cold} cold, ${c.refits.failed} failed`]);
  }
  rows.push(['Parameters at a bound', esc(c.parametersAtBound.join(', ') || 'none')]);
  rows.push(['Clipped bins', esc(c.clippedBins.map((b) => `${b.region} bin ${b.bin} (${b.process})`).join(', ') || 'none')]);
  const warnings = c.warnings.length ? `<div class="note"><p><b>Convergence warnings</b> (read them with every number below):</p><ul>${c.warnings.map((w) => `<li>${esc(w)}</li>`).join('')}</ul></div>` : '<p class="muted">No convergence warnings.</p>';
  const failure = failed ? `<div class="note failure"><p><b>The fit failed:</b> ${esc(c.failure ?? d.fit.failure ?? 'no reason recorded')}</p><p>No number of this fit is shown: a fit that did not converge has none to report.</p></div>` : '';
  return `<section><h2>Convergence</h2>${failure}${facts(rows)}${warnings}</section>`;
}

/** The warnings line that sits beside every block of numbers. */
const warningsBeside = (r: FitResult) =>
  r.convergence.warnings.length ? `<p class="note">Read with the ${r.convergence.warnings.length} convergence warning${r.convergence.warnings.length === 1 ? '' : 's'} above: ${esc(r.convergence.warnings.join(' · '))}</p>` : '';

function summary(r: FitResult): string {
  const s = r.summary;
  if (!s) {
    const why = r.options.hiddenMu ? 'μ is hidden in this fit: no number computed from μ̂ was kept, so there is no μ̂, significance or limit to show.' : 'This fit reports no summary of μ.';
    return `<section><h2>Summary</h2><p class="note calm">${esc(why)} Goodness of fit, pulls and constraints follow.</p></section>`;
  }
  const mu = s.mu;
  const rows: string[][] = [];
  rows.push(['μ̂ (best-fit signal strength)', `${num(mu.value)} ± ${num(mu.error)}${mu.fixed ? ' (held)' : ''}`, 'σ_μ = √V_μμ']);
  if (mu.interval68) rows.push(['68 % interval (q = 1)', `${signed(mu.interval68.low)} / ${signed(mu.interval68.high)}`, 'offsets from μ̂ to the scan’s crossings']);
  if (mu.interval95) rows.push(['95 % interval (q = 3.84)', `${signed(mu.interval95.low)} / ${signed(mu.interval95.high)}`, 'offsets from μ̂']);
  if (mu.stat !== null || mu.syst !== null) rows.push(['σ_μ statistical / systematic', `${num(mu.stat)} / ${num(mu.syst)}`, 'split of the error']);
  if (s.discovery) rows.push(['Observed significance', `Z = ${num(s.discovery.z, 3)} σ (p₀ = ${num(s.discovery.p0, 3)})`, `q₀ = ${num(s.discovery.q0)}`]);
  if (s.expected) rows.push(['Expected significance', `Z = ${num(s.expected.z, 3)} σ (p₀ = ${num(s.expected.p0, 3)})`, `Asimov at μ = ${num(s.expected.asimovMu)}`]);
  if (s.limit)
    rows.push([
      `${num(s.limit.cl * 100, 3)} % CL upper limit on μ (CLs)`,
      `observed ${num(s.limit.observed)}; expected ${num(s.limit.expected.median)}`,
      `±1σ ${num(s.limit.expected.minus1)}–${num(s.limit.expected.plus1)}, ±2σ ${num(s.limit.expected.minus2)}–${num(s.limit.expected.plus2)}`,
    ]);
  rows.push(['Goodness of fit (saturated model)', `t = ${num(s.goodnessOfFit.t)}, ${s.goodnessOfFit.dof} d.o.f., p = ${num(s.goodnessOfFit.p, 3)}`, '']);
  const pois = r.poi?.list.filter((p) => p.name !== 'mu') ?? [];
  const poiTable = pois.length
    ? `<h3>Other parameters of interest</h3>${table(
        ['parameter', 'best fit', 'σ', '68 % interval'],
        pois.map((p) => [esc(p.label || p.name), num(p.value), num(p.error), p.interval68 ? `${num(p.interval68.low)} – ${num(p.interval68.high)}` : '—']),
        [false, true, true, true],
      )}`
    : '';
  return `<section><h2>Summary</h2>${warningsBeside(r)}${table(['quantity', 'value', 'meaning'], rows.map((x) => x.map(esc)), [false, true, false])}${poiTable}</section>`;
}

function scans(d: PackData, r: FitResult): string {
  if (!r.summary) return '';
  const labelOf = (name: string) => (name === 'mu' ? 'μ' : (r.poi?.list.find((p) => p.name === name)?.label ?? name));
  const list = [r.scan, ...(r.poi?.list.filter((p) => p.name !== 'mu').map((p) => p.scan ?? null) ?? [])].filter((x): x is NonNullable<FitResult['scan']> => !!x && !x.failure && x.points.length > 1);
  const figures = list.map((x) => figure(scanChart(x.points, x.bestFit, d.analysis.plotLabels, `Profile-likelihood scan of ${labelOf(x.parameter)}`, labelOf(x.parameter)), esc(`Scan of ${labelOf(x.parameter)}: ${x.points.length} points; crossings of q = 1 at ${num(x.crossings68.low)} and ${num(x.crossings68.high)}.`)));
  const c = r.contour;
  if (c && !c.failure && c.a.length > 1 && c.b.length > 1)
    figures.push(figure(contourChart(c, d.analysis.plotLabels, `Contour of ${labelOf(c.parameters[0])} and ${labelOf(c.parameters[1])}`, [labelOf(c.parameters[0]), labelOf(c.parameters[1])]), esc(`68.27 % (solid) and 95 % (dashed) contours for two parameters; the cross is the best fit. ${c.points.failed} of ${c.points.converged + c.points.failed} grid points failed and are left out.`)));
  if (!figures.length) return '';
  return `<section><h2>Likelihood scans</h2>${warningsBeside(r)}<div class="pair">${figures.join('')}</div></section>`;
}

function pulls(d: PackData, r: FitResult): string {
  const rows = r.nuisance.filter((n) => !n.fixed);
  if (!rows.length) return `<section><h2>Pulls</h2><p class="muted">No free nuisance parameter.</p></section>`;
  const drawn = rows.length > PULLS_DRAWN ? [...rows].sort((a, b) => Math.abs(b.pull) - Math.abs(a.pull)).slice(0, PULLS_DRAWN) : rows;
  const chart = pullsChart(
    drawn.map((n) => ({ name: n.name, pull: n.pull, constraint: n.constraint, overConstrained: n.overConstrained })),
    d.analysis.plotLabels,
    'Pulls of the nuisance parameters',
  );
  const caption = `Pull (θ̂ − θ₀)/Δθ as a point, post-fit width σ̂ as a bar; teal ±1, sand ±2.${drawn.length < rows.length ? ` The ${drawn.length} largest |pulls| of ${rows.length}; the table lists all.` : ''}`;
  return `<section><h2>Pulls</h2>${warningsBeside(r)}${figure(chart, esc(caption))}${table(
    ['parameter', 'group', 'pull', 'constraint σ̂', 'over-constrained'],
    r.nuisance.map((n) => [esc(n.name), esc(n.group ?? '—'), n.fixed ? 'held' : signed(n.pull), num(n.constraint, 3), n.overConstrained ? 'yes' : '']),
    [false, false, true, true, false],
  )}</section>`;
}

function impacts(d: PackData, r: FitResult): string {
  if (!r.summary) return `<section><h2>Impacts</h2><p class="muted">No impacts on μ: ${r.options.hiddenMu ? 'μ is hidden in this fit.' : 'this fit has no free μ.'}</p></section>`;
  const ranked = r.nuisance.filter((n) => n.rank !== null).sort((a, b) => a.rank! - b.rank!);
  if (!ranked.length) return `<section><h2>Impacts</h2><p class="muted">This fit computed no impacts (impacts: ${esc(r.options.impacts)}).</p></section>`;
  const rows: ImpactRow[] = ranked.slice(0, IMPACTS_DRAWN).map((n) =>
    n.postfitImpact ? { name: n.name, up: n.postfitImpact.up, down: n.postfitImpact.down, kind: 'post-fit' } : { name: n.name, up: n.quickImpact, down: n.quickImpact === null ? null : -n.quickImpact, kind: 'quick' },
  );
  const kind = ranked.some((n) => n.postfitImpact) ? 'post-fit impacts from refits with θ fixed at θ̂ ± σ̂' : 'quick impacts ρ(μ, θ)·σ_μ from the covariance (± drawn alike)';
  const chart = impactsChart(rows, d.analysis.plotLabels, 'Impacts on μ, ranked');
  return `<section><h2>Impacts on μ, ranked</h2>${warningsBeside(r)}${figure(chart, esc(`The ${rows.length} highest-ranked of ${ranked.length}: ${kind}.`))}${table(
    ['rank', 'parameter', 'group', 'Δμ (θ̂ + σ̂)', 'Δμ (θ̂ − σ̂)', 'pre-fit Δμ (±1)', 'quick ρσ_μ', 'pull'],
    ranked.map((n) => [
      String(n.rank),
      esc(n.name),
      esc(n.group ?? '—'),
      signed(n.postfitImpact?.up),
      signed(n.postfitImpact?.down),
      n.prefitImpact ? `${signed(n.prefitImpact.up)} / ${signed(n.prefitImpact.down)}` : '—',
      signed(n.quickImpact),
      signed(n.pull),
    ]),
    [true, false, false, true, true, true, true, true],
  )}</section>`;
}

function correlations(d: PackData, r: FitResult): string {
  const c = r.correlation;
  if (!c || !c.names.length) return `<section><h2>Correlations</h2><p class="muted">No correlation matrix in this result.</p></section>`;
  const n = c.names.length;
  const pairs: { a: string; b: string; r: number }[] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) pairs.push({ a: c.names[i], b: c.names[j], r: c.values[i * n + j] });
  pairs.sort((p, q) => Math.abs(q.r) - Math.abs(p.r));
  const strongest = table(
    ['parameter', 'parameter', 'ρ'],
    pairs.filter((p) => Math.abs(p.r) >= 0.05).slice(0, 20).map((p) => [esc(p.a), esc(p.b), signed(p.r, 3)]),
    [false, false, true],
  );
  if (n > HEATMAP_LIMIT) return `<section><h2>Correlations</h2><p>${n} parameters: too many to draw legibly. The strongest pairs (up to 20, |ρ| ≥ 0.05):</p>${strongest}</section>`;
  return `<section><h2>Correlations</h2>${figure(correlationChart(c.names, c.values, d.analysis.plotLabels, 'Correlation matrix of the fitted parameters'), 'Teal: anti-correlated; plum: correlated; white: none.')}<h3>The strongest pairs (up to 20, |ρ| ≥ 0.05)</h3>${strongest}</section>`;
}

function distributions(d: PackData, r: FitResult): string {
  const labelOf = new Map(d.regions.map((x) => [x.key, x]));
  const procIndex = new Map(d.processes.map((p, i) => [p.key, { ...p, i }]));
  const dataOf = new Map(r.data.regions.map((x) => [x.region, x]));
  const dataLabel = r.data.dataset === 'asimov' ? `Asimov data (μ = ${num(r.data.asimovMu)})` : 'Data';
  const parts = r.yields.prefit.map((pre, k) => {
    const region = labelOf.get(pre.region);
    const post = r.yields.postfit?.find((p) => p.region === pre.region) ?? null;
    const observed = dataOf.get(pre.region);
    const withheld = observed ? observed.values === null && r.data.dataset === 'observed' : false;
    const note = withheld ? 'data withheld (blinded)' : pre.inFit ? null : 'not in the fit';
    const observable = region ? `${region.observable}${region.unit ? ` [${region.unit}]` : ''}` : pre.region;
    const chart = (stage: string, y: typeof pre, id: string) =>
      regionChart(
        {
          title: `${pre.region}: ${stage}`,
          stage,
          observable,
          edges: y.edges,
          layers: y.processes.map((p) => {
            const meta = procIndex.get(p.process);
            return { label: meta?.label || p.process, colour: processColour(meta?.i ?? 0, meta?.colour), values: p.values };
          }),
          total: y.total.values,
          totalErrors: y.total.errors,
          data: observed?.values ?? null,
          dataLabel,
          dataNote: note,
        },
        d.analysis.plotLabels,
        id,
      );
    const charts = `<div class="pair">${figure(chart('Pre-fit', pre, `pre-${k}`), 'Pre-fit expectation')}${post ? figure(chart('Post-fit', post, `post-${k}`), 'Post-fit expectation') : `<p class="muted">No post-fit expectation${r.options.hiddenMu && pre.role === 'signal' ? ': with μ hidden none is kept for a signal region, since it would show μ̂' : ' in this result'}.</p>`}</div>`;
    return `<h3>${esc(pre.region)}${region?.label && region.label !== pre.region ? ` — ${esc(region.label)}` : ''} <span class="muted">(${esc(pre.role)} region${pre.inFit ? '' : ', not in the fit'}${withheld ? ', observed counts withheld while the analysis is blinded' : ''})</span></h3>${charts}`;
  });
  return `<section><h2>Distributions per region</h2><p class="muted">Processes stacked; the expectation’s ±1σ hatched; ${esc(dataLabel.toLowerCase())} as points with ±√n, and their ratio to the expectation below.</p>${warningsBeside(r)}${parts.join('')}</section>`;
}

function breakdown(d: PackData, r: FitResult): string {
  const groups = [...r.groupedImpacts].sort((a, b) => b.impact - a.impact);
  const grouped = groups.length
    ? `${figure(groupsChart(groups, d.analysis.plotLabels, 'Grouped impacts on μ'), 'The part of σ_μ attributed to each group of systematics (from the covariance).')}${table(
        ['group', 'impact on μ', 'parameters'],
        groups.map((g) => [esc(g.group), num(g.impact, 3), esc(g.parameters.join(', '))]),
        [false, true, false],
      )}`
    : '<p class="muted">No grouped impacts in this result.</p>';
  const b = r.variant?.breakdown;
  const frozen = b?.length
    ? `<h3>Breakdown by freezing each group</h3>${table(
        ['group', 'σ₊', 'σ₋', 'grouped impact', 'flagged'],
        b.map((x) => [esc(x.group), num(x.up, 3), num(x.down, 3), num(x.schur, 3), x.flagged ? 'negative difference, shown as 0' : '']),
        [false, true, true, true, false],
      )}`
    : '';
  return `<section><h2>Uncertainty breakdown</h2>${r.summary ? grouped + frozen : '<p class="muted">No breakdown of σ_μ: this fit has no μ to break down.</p>'}</section>`;
}

function register(d: PackData): string {
  const frozen = d.version.register;
  if (!frozen) return `<section><h2>The register as frozen</h2><p class="muted">Model version ${d.version.number} was frozen before the register was kept with it.</p></section>`;
  const counts = frozen.reduce<Record<string, number>>((n, e) => ({ ...n, [e.state]: (n[e.state] ?? 0) + 1 }), {});
  const rows = frozen.map((e) => {
    const w = d.warnings.get(e.key) ?? [];
    const text = w.length ? `<ul>${w.map((x) => `<li>${esc(x.region)} / ${esc(x.process)}: ${esc(x.messages.join('; '))}</li>`).join('')}</ul>` : '<span class="muted">none</span>';
    return [`<span class="key">${esc(e.key)}</span>`, esc(e.label), esc(e.state.replace('_', ' ')), String(e.revision), text];
  });
  if (!frozen.length) return `<section><h2>The register as frozen in version ${d.version.number}</h2><p class="muted">No register entry was active when version ${d.version.number} was frozen.</p></section>`;
  return `<section><h2>The register as frozen in version ${d.version.number}</h2><p>${Object.entries(counts)
    .map(([s, n]) => `${n} ${esc(s.replace('_', ' '))}`)
    .join(', ')}. Entry, review state and revision are as frozen; the warnings are those of each entry’s effects <b>now</b> (current, not frozen).</p>${table(['entry', 'label', 'state (frozen)', 'revision', 'current warnings of its effects'], rows, [false, false, false, true, false])}</section>`;
}

function questions(d: PackData): string {
  if (!d.questions.length) return `<section><h2>Question log</h2><p class="muted">No question has been raised in this analysis.</p></section>`;
  const items = d.questions.map((q) => {
    const thread = q.thread
      .map(
        (a) =>
          `<div class="thread"><p><b>${esc(a.author?.name ?? 'former member')}</b> <span class="muted">${esc(when(a.createdAt))}</span></p><p>${esc(a.body)}</p>${
            a.evidence.length ? `<p class="muted">Evidence: ${a.evidence.map((e) => `${esc(e.label)}${e.state ? ` (${esc(e.state)})` : ''}`).join('; ')}</p>` : ''
          }</div>`,
      )
      .join('');
    const tone = q.state === 'resolved' ? 'ok' : q.state === 'answered' ? 'warn' : 'bad';
    return `<div class="question"><h3>#${q.id} ${esc(q.title)} ${pill({ text: q.state, tone })}</h3><p class="muted">About ${esc(q.about.label)}${q.fit ? `, seen in fit #${q.fit.id}` : ''} · raised by ${esc(q.author?.name ?? 'former member')} ${esc(when(q.createdAt))}${
      q.resolvedBy ? ` · resolved by ${esc(q.resolvedBy.name)} ${esc(when(q.resolvedAt))}` : ''
    }</p><p>${esc(q.body)}</p>${thread}</div>`;
  });
  const open = d.questions.filter((q) => q.state !== 'resolved').length;
  return `<section><h2>Question log</h2><p>${d.questions.length} question${d.questions.length === 1 ? '' : 's'}, ${open} not resolved.</p>${items.join('')}</section>`;
}

function blinding(d: PackData): string {
  const b = d.blinding;
  const rows = b.events.map((e) => [esc(when(e.at)), esc(e.action.replace(/_/g, ' ')), esc(e.by ?? '—'), esc(e.note) + (e.checklist ? `<br><span class="muted">Checklist then: ${e.checklist.items.map((i) => `${i.ok ? '✓' : '✗'} ${esc(i.label)}`).join('; ')}</span>` : '')]);
  const state =
    b.state === 'unblinded'
      ? 'The analysis is <b>unblinded</b>.'
      : `The analysis is <b>${esc(b.state.replace(/_/g, ' '))}</b>; unblinding needs ${b.approvalsRequired} convener approval${b.approvalsRequired === 1 ? '' : 's'}. Observed counts of blinded regions are not in this pack.`;
  return `<section><h2>Blinding log</h2><p>${state}</p>${rows.length ? table(['when', 'what', 'by', 'note'], rows) : '<p class="muted">No blinding event has been logged.</p>'}</section>`;
}

export function renderPack(d: PackData): string {
  const r = d.result;
  const converged = d.fit.state === 'succeeded' && r && r.status === 'converged';
  const numbers = converged ? [summary(r), scans(d, r), pulls(d, r), impacts(d, r), correlations(d, r), distributions(d, r), breakdown(d, r)].join('\n') : '';
  const title = `Approval pack: ${d.analysis.name}, ${d.fit.label || `fit ${d.fit.id}`}`;
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(title)}</title>
<style>${STYLE}</style>
</head>
<body>
<main>
${header(d)}
${whatWasFitted(d)}
${how(d)}
${convergence(d)}
${numbers}
${register(d)}
${questions(d)}
${blinding(d)}
<footer>${esc(STATEMENT)}</footer>
</main>
</body>
</html>
`;
}
