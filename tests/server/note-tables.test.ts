import Papa from 'papaparse';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fits } from '../../server/db/schema';
import { effectRanges, escapeLatex, plainTable, pullsTable, roundWithError, systematicsTable, toCsv, toLatex, yieldsTable } from '../../server/services/note-tables';
import { MARK, markSignalCounts } from './blinded-scan';
import { createTestApp, DEMO, signedIn, type Client, type TestApp } from './helpers';

const C = '/api/analyses/cascade-rate';
const V = '/api/analyses/vireon-search';
const NASTY = 'a_b 50% & #1 $x$ \\ {c} ~ ^';

/**
 * What a LaTeX table must be to compile: every \begin{X} closed by its \end{X} in order; in each
 * tabular, every row holds one & fewer than its columns (an escaped \& is text) and ends with \\.
 * Returns the problems found, each with its line.
 */
function latexProblems(tex: string): string[] {
  const problems: string[] = [];
  const stack: string[] = [];
  let columns: number | null = null;
  tex.split('\n').forEach((line, n) => {
    for (const m of line.matchAll(/\\(begin|end)\{([^}]*)\}(?:(?:\[[^\]]*\])?\{([lrc|]*)\})?/g)) {
      if (m[1] === 'begin') {
        stack.push(m[2]);
        if (m[2] === 'tabular') columns = (m[3] ?? '').replace(/\|/g, '').length;
      } else {
        const open = stack.pop();
        if (open !== m[2]) problems.push(`line ${n + 1}: \\end{${m[2]}} closes ${open ?? 'nothing'}`);
        if (m[2] === 'tabular') columns = null;
      }
    }
    const row = line.trim();
    if (columns !== null && !row.startsWith('\\begin{tabular}') && row !== '\\hline') {
      const amps = (row.match(/(?<!\\)&/g) ?? []).length;
      if (amps !== columns - 1) problems.push(`line ${n + 1}: ${amps} & for ${columns} columns`);
      if (!row.endsWith('\\\\')) problems.push(`line ${n + 1}: row does not end with \\\\`);
    }
  });
  if (stack.length) problems.push(`unclosed: ${stack.join(', ')}`);
  return problems;
}

/** Text with every escape this module writes taken out: what is left must hold no special character. */
const unescaped = (tex: string) => tex.replace(/\\text(backslash|asciitilde|asciicircum)\{\}/g, '').replace(/\\[{}_%&#$]/g, '');

/** Every data row of a tabular, split into cells. */
const latexRows = (tex: string) =>
  tex
    .split('\n')
    .map((l) => l.trim())
    .filter((l) => l.endsWith('\\\\'))
    .map((l) => l.slice(0, -2).split(/(?<!\\)&/).map((c) => c.trim()));

const parseCsv = (text: string) => Papa.parse<Record<string, string>>(text.trim(), { header: true }).data;
const sum = (xs: number[]) => xs.reduce((s, x) => s + x, 0);

describe('the LaTeX writer', () => {
  it('escapes every character LaTeX treats specially', () => {
    // the special characters of LaTeX text: # $ % & ~ _ ^ \ { } (Lamport, "LaTeX: A Document
    // Preparation System", 2nd ed., 1994, §2.2.1; cited from memory)
    expect(escapeLatex(NASTY)).toBe('a\\_b 50\\% \\& \\#1 \\$x\\$ \\textbackslash{} \\{c\\} \\textasciitilde{} \\textasciicircum{}');
    for (const c of '#$%&~_^\\{}') expect(unescaped(escapeLatex(`x${c}y`)), c).toBe('xy');
    expect(escapeLatex('two\nlines')).toBe('two lines');
  });

  it('checks itself: the balance check finds an unclosed environment, a missing & and a row without \\\\', () => {
    expect(latexProblems('\\begin{table}\n\\begin{tabular}{lr}\n a & b \\\\\n\\end{tabular}\n\\end{table}')).toEqual([]);
    expect(latexProblems('\\begin{table}\n\\begin{tabular}{lr}\n a & b \\\\\n\\end{tabular}')).toEqual(['unclosed: table']);
    expect(latexProblems('\\begin{tabular}{lr}\n a \\& b \\\\\n\\end{tabular}')).toEqual(['line 2: 0 & for 2 columns']);
    expect(latexProblems('\\begin{tabular}{lr}\n a & b\n\\end{tabular}')).toEqual(['line 2: row does not end with \\\\']);
    expect(latexProblems('\\begin{table}\\begin{tabular}{l}\\end{table}\\end{tabular}')).toHaveLength(2);
  });

  it('rounds the error to two significant digits and the value to the same place', () => {
    expect(roundWithError(1.23456, 0.0345)).toEqual({ value: '1.235', error: '0.035' });
    expect(roundWithError(1234.5, 123)).toEqual({ value: '1230', error: '120' });
    expect(roundWithError(0.5, 0.0996)).toEqual({ value: '0.50', error: '0.10' });
    expect(roundWithError(-0.0004, 0.25)).toEqual({ value: '0.00', error: '0.25' });
    expect(roundWithError(42.17, 1.5)).toEqual({ value: '42.2', error: '1.5' });
  });

  it('writes a balanced table with escaped text, a caption and a label, and RFC 4180 CSV', () => {
    const model = {
      regions: [{ key: 'SR', role: 'signal' }],
      templates: [{ region: 'SR', process: 'bkg', nominal: [10, 20] }],
      systematics: [{ key: 'sys_1', label: NASTY, group: 'g, "quoted"\nnext', effects: [{ region: 'SR', process: 'bkg', kind: 'scale' as const, up: 1.1, down: 0.9 }] }],
    };
    const table = systematicsTable(model as never, `Systematics of fit ${escapeLatex(NASTY)}`, 'tab:x_y');
    const tex = toLatex(table);
    expect(latexProblems(tex)).toEqual([]);
    expect(tex).toContain(`\\caption{Systematics of fit ${escapeLatex(NASTY)}}`);
    expect(tex).toContain('\\label{tab:x-y}');
    for (const cell of latexRows(tex)[1].slice(0, 4)) expect(unescaped(cell)).not.toMatch(/[#$%&~_^\\{}]/);
    expect(latexRows(tex)[1]).toEqual(['sys\\_1', escapeLatex(NASTY), 'g, "quoted" next', 'SR', '$+10.0$ to $+10.0$', '$-10.0$ to $-10.0$']);
    const csv = toCsv(table);
    expect(csv.split('\n')[1]).toBe(`sys_1,${NASTY},"g, ""quoted""`);
    expect(Papa.parse<string[]>(csv.trim()).data[1]).toEqual(['sys_1', NASTY, 'g, "quoted"\nnext', 'SR', '10', '10', '-10', '-10']);
  });

  it('prints impacts with two significant digits and their sign, and correlations with three decimals, and keeps the raw numbers in CSV', () => {
    const n = { name: 'halo_norm', group: null, fixed: false, pull: 0.5012, constraint: 0.4137, overConstrained: false, normalisedPull: null, quickImpact: null, prefitImpact: null };
    const pulls = pullsTable({ nuisance: [{ ...n, name: 'held', pull: 0, constraint: null, postfitImpact: null, rank: null }, { ...n, postfitImpact: { up: -0.06901, down: 0.06464 }, rank: 1 }] }, 'Pulls', 'tab:p');
    expect(latexRows(toLatex(pulls)).slice(1)).toEqual([
      ['$1$', 'halo\\_norm', '', '$0.50 \\pm 0.41$', '$-0.069$', '$+0.065$'],
      ['--', 'held', '', '$0$', '--', '--'],
    ]);
    expect(parseCsv(toCsv(pulls))[0]).toEqual({ rank: '1', parameter: 'halo_norm', group: '', pull: '0.5012', constraint: '0.4137', impact_up: '-0.06901', impact_down: '0.06464' });
    const corr = plainTable('C', 'tab:c', [['', 'a', 'b'], ['a', 1, -0.61283], ['b', -0.61283, 1.2e-14]], 3);
    expect(latexRows(toLatex(corr)).slice(1)).toEqual([
      ['a', '$1.000$', '$-0.613$'],
      ['b', '$-0.613$', '$0.000$'],
    ]);
    expect(toCsv(corr).split('\n')[2]).toBe('b,-0.61283,1.2e-14');
  });

  it('gives each systematic\u2019s range of effect per region as a hand computation does', () => {
    const model = {
      regions: [
        { key: 'A', role: 'signal' },
        { key: 'B', role: 'control' },
      ],
      templates: [
        { region: 'A', process: 'sig', nominal: [10, 20] },
        { region: 'A', process: 'bkg', nominal: [100, 0] },
        { region: 'B', process: 'bkg', nominal: [50] },
      ],
      systematics: [
        {
          key: 'x',
          effects: [
            { region: 'A', process: 'bkg', kind: 'scale' as const, up: 1.1, down: 0.95 },
            { region: 'A', process: 'sig', kind: 'shape' as const, up: [11, 18], down: [9.5, 23] },
          ],
        },
        { key: 'y', group: 'lumi', effects: [{ region: 'B', process: 'bkg', kind: 'scale' as const, up: 1.02, down: 0.98 }] },
      ],
    };
    // x in A: up +10 % (bkg bin 1; bin 2 has no nominal), +10 % and −10 % (sig); down −5 % (bkg), −5 % and +15 % (sig)
    const ranges = effectRanges(model as never);
    expect(ranges.map((r) => [r.key, r.region])).toEqual([
      ['x', 'A'],
      ['y', 'B'],
    ]);
    const [x, y] = ranges;
    expect(x.upMin).toBeCloseTo(-10, 9);
    expect(x.upMax).toBeCloseTo(10, 9);
    expect(x.downMin).toBeCloseTo(-5, 9);
    expect(x.downMax).toBeCloseTo(15, 9);
    expect([y.upMin, y.upMax, y.downMin, y.downMax].map((v) => Math.round(v * 1e9) / 1e9)).toEqual([2, 2, -2, -2]);
    expect(y.group).toBe('lumi');
  });

  it('sums a region\u2019s bins with their errors in quadrature, and leaves a post-fit yield the result lacks empty', () => {
    const series = (values: number[], errors: number[]) => ({ values, errors });
    const result = {
      yields: {
        prefit: [{ region: 'SR', role: 'signal' as const, inFit: true, edges: [0, 1, 2], processes: [{ process: 's', ...series([3, 4], [0.3, 0.4]) }], total: series([3, 4], [0.3, 0.4]) }],
        postfit: [],
      },
    };
    const csv = parseCsv(toCsv(yieldsTable(result, 'Yields', 'tab:y')));
    expect(csv[0]).toEqual({ region: 'SR', role: 'signal', process: 's', prefit: '7', prefit_error_bins_in_quadrature: String(Math.sqrt(0.09 + 0.16)), postfit: '', postfit_error_bins_in_quadrature: '' });
    expect(latexRows(toLatex(yieldsTable(result, 'Yields', 'tab:y')))[1]).toEqual(['SR', 'signal', 's', '$7.00 \\pm 0.50$', '--']);
  });
});

describe('the analysis-note tables of a fit', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let version: number;
  async function runFit(base: string, v: number, options: object, label = '') {
    const started = await analyst.send('post', `${base}/fits`, { version: v, label, options });
    expect(started.status, JSON.stringify(started.body)).toBe(202);
    await t.fits.idle();
    return (await analyst.get(`${base}/fits/${started.body.id}`)).body;
  }
  const get = async (base: string, id: number, format: string, table: string) => {
    const res = await reader.get(`${base}/fits/${id}/export?format=${format}&table=${table}`);
    expect(res.status, `${table} ${format}: ${res.text}`).toBe(200);
    return res.text;
  };
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader] = await Promise.all([DEMO.analyst, DEMO.reader].map((e) => signedIn(t.app, e)));
    version = (await analyst.send('post', `${C}/versions`, { note: 'note tables' })).body.number;
  });
  afterAll(async () => t.close());

  it('writes every table as a balanced LaTeX table whose caption names the fit, its label escaped, and the version', async () => {
    const fit = await runFit(C, version, { dataset: 'observed', impacts: 'full' }, NASTY);
    expect(fit.state).toBe('succeeded');
    for (const table of ['summary', 'parameters', 'nuisance', 'groups', 'correlation', 'yields', 'systematics', 'pulls']) {
      const res = await reader.get(`${C}/fits/${fit.id}/export?format=latex&table=${table}`);
      expect(res.status, table).toBe(200);
      expect(res.headers['content-disposition']).toContain(`cascade-rate-fit-${fit.id}-${table}.tex`);
      expect(latexProblems(res.text), table).toEqual([]);
      expect(res.text, table).toContain(`fit ${escapeLatex(NASTY)} (id ${fit.id}), model version ${version}`);
      expect(res.text).not.toContain('hidden');
      expect(res.text).toContain(`\\label{tab:cascade-rate-fit-${fit.id}-${table}}`);
      const csv = await get(C, fit.id, 'csv', table);
      expect(csv.split('\n').length, table).toBeGreaterThan(2);
    }
  });

  it('sums the yields table from the result\u2019s own per-bin yields, pre- and post-fit, and says how its errors are made', async () => {
    const [fit] = (await reader.get(`${C}/fits`)).body.filter((f: { state: string }) => f.state === 'succeeded');
    const result = JSON.parse((await reader.get(`${C}/fits/${fit.id}/export?format=json`)).text).result;
    const rows = parseCsv(await get(C, fit.id, 'csv', 'yields'));
    type Series = { values: number[]; errors: number[] };
    type Region = { region: string; processes: ({ process: string } & Series)[]; total: Series };
    const expected = result.yields.prefit.flatMap((r: Region) => [...r.processes.map((p) => ({ region: r.region, process: p.process })), { region: r.region, process: 'total' }]);
    expect(rows.map((r) => ({ region: r.region, process: r.process }))).toEqual(expected);
    const series = (stage: 'prefit' | 'postfit', region: string, process: string): Series => {
      const r = (result.yields[stage] as Region[]).find((x) => x.region === region)!;
      return process === 'total' ? r.total : r.processes.find((p) => p.process === process)!;
    };
    for (const row of rows)
      for (const stage of ['prefit', 'postfit'] as const) {
        const s = series(stage, row.region, row.process);
        expect(Number(row[stage])).toBeCloseTo(sum(s.values), 9);
        expect(Number(row[`${stage}_error_bins_in_quadrature`])).toBeCloseTo(Math.sqrt(sum(s.errors.map((e) => e * e))), 9);
      }
    const tex = await get(C, fit.id, 'latex', 'yields');
    expect(tex).toContain('Errors added in quadrature over bins, correlations between bins neglected');
    const first = rows[0];
    const rounded = roundWithError(Number(first.postfit), Number(first.postfit_error_bins_in_quadrature));
    expect(latexRows(tex)[1][4]).toBe(`$${rounded.value} \\pm ${rounded.error}$`);
  });

  it('gives the systematics of the fit\u2019s frozen version, and the pulls ranked by their post-fit impact on \u03bc', async () => {
    const [fit] = (await reader.get(`${C}/fits`)).body.filter((f: { state: string }) => f.state === 'succeeded');
    const systematics = parseCsv(await get(C, fit.id, 'csv', 'systematics'));
    expect([...new Set(systematics.map((r) => r.entry))].sort()).toEqual(['cascade_eff', 'cascade_theory', 'continuum_shape', 'energy_scale', 'halo_norm', 'lumi']);
    for (const r of systematics) {
      expect(Number(r.up_min_percent)).toBeLessThanOrEqual(Number(r.up_max_percent));
      expect(Number(r.down_min_percent)).toBeLessThanOrEqual(Number(r.down_max_percent));
    }
    // an entry edited after the fit does not change its table: the version is frozen
    await analyst.send('put', `${C}/regions/CR/observed`, { observed: Array(10).fill(9) });
    expect(parseCsv(await get(C, fit.id, 'csv', 'systematics'))).toEqual(systematics);
    const result = JSON.parse((await reader.get(`${C}/fits/${fit.id}/export?format=json`)).text).result;
    const pulls = parseCsv(await get(C, fit.id, 'csv', 'pulls'));
    expect(pulls.map((p) => Number(p.rank))).toEqual(pulls.map((_, i) => i + 1));
    for (const p of pulls) {
      const n = result.nuisance.find((x: { name: string }) => x.name === p.parameter);
      expect([Number(p.pull), Number(p.constraint), Number(p.impact_up), Number(p.impact_down)]).toEqual([n.pull, n.constraint, n.postfitImpact.up, n.postfitImpact.down]);
    }
    const tex = await get(C, fit.id, 'latex', 'pulls');
    expect(tex).toContain('$\\Delta\\mu$ ($+\\sigma$)');
    expect(latexRows(tex).slice(1).map((r) => r[1])).toEqual(pulls.map((p) => escapeLatex(p.parameter)));
  });

  it('shows nothing of \u03bc and no signal-region post-fit yield of a fit with \u03bc hidden, in any format', async () => {
    const open = await runFit(C, version, { dataset: 'observed', impacts: 'full' });
    const hidden = await runFit(C, version, { dataset: 'observed', impacts: 'full', hiddenMu: true });
    expect(hidden.state).toBe('succeeded');
    const openResult = JSON.parse((await reader.get(`${C}/fits/${open.id}/export?format=json`)).text).result;
    const signal: string[] = openResult.yields.prefit.filter((r: { role: string }) => r.role === 'signal').map((r: { region: string }) => r.region);
    expect(signal.length).toBeGreaterThan(0);
    // what a leak would show: the open fit's signal-region post-fit sums and its impacts on μ
    const leaks = [
      ...openResult.yields.postfit.filter((r: { region: string }) => signal.includes(r.region)).flatMap((r: { processes: { values: number[] }[]; total: { values: number[] } }) => [...r.processes, r.total].map((s) => sum(s.values))),
      ...openResult.nuisance.flatMap((n: { postfitImpact: { up: number; down: number } }) => [n.postfitImpact.up, n.postfitImpact.down]),
    ].filter((x: number) => Math.abs(x) > 1e-6);
    expect(leaks.length).toBeGreaterThan(signal.length);

    const yields = parseCsv(await get(C, hidden.id, 'csv', 'yields'));
    for (const r of yields) {
      if (signal.includes(r.region)) expect([r.postfit, r.postfit_error_bins_in_quadrature], `${r.region} ${r.process}`).toEqual(['', '']);
      else expect(Number(r.postfit), `${r.region} ${r.process}`).toBeGreaterThan(0);
    }
    const yieldsTex = await get(C, hidden.id, 'latex', 'yields');
    for (const row of latexRows(yieldsTex).slice(1)) if (signal.includes(row[0])) expect(row[4]).toBe('--');
    const pulls = parseCsv(await get(C, hidden.id, 'csv', 'pulls'));
    expect(pulls.length).toBe(6);
    for (const p of pulls) expect([p.rank, p.impact_up, p.impact_down]).toEqual(['', '', '']);
    const pullsTex = await get(C, hidden.id, 'latex', 'pulls');
    for (const row of latexRows(pullsTex).slice(1)) expect(row.slice(4)).toEqual(['--', '--']);
    for (const text of [yieldsTex, pullsTex]) {
      expect(text).toContain('$\\mu$ hidden');
      expect(latexProblems(text)).toEqual([]);
    }
    const everything = [yieldsTex, pullsTex, await get(C, hidden.id, 'csv', 'yields'), await get(C, hidden.id, 'csv', 'pulls')];
    for (const table of ['nuisance', 'correlation', 'systematics']) for (const format of ['csv', 'latex']) everything.push(await get(C, hidden.id, format, table));
    const numbers = everything.join('\n').match(/-?\d+(\.\d+)?(e-?\d+)?/g)!.map(Number);
    for (const leak of leaks) expect(numbers.some((x) => Math.abs(x - leak) <= 1e-9 * Math.max(1, Math.abs(leak))), String(leak)).toBe(false);
    for (const table of ['summary', 'parameters'])
      for (const format of ['csv', 'latex']) expect((await reader.get(`${C}/fits/${hidden.id}/export?format=${format}&table=${table}`)).status, `${table} ${format}`).toBe(409);
  });

  it('refuses an unknown format or table with a 400 naming the field and the allowed values', async () => {
    const [fit] = (await reader.get(`${C}/fits`)).body.filter((f: { state: string }) => f.state === 'succeeded');
    const format = await reader.get(`${C}/fits/${fit.id}/export?format=docx&table=yields`);
    expect(format.status).toBe(400);
    expect(format.body.error.issues[0].path).toEqual(['format']);
    expect(format.body.error.issues[0].message).toMatch(/json.*csv.*latex/);
    const table = await reader.get(`${C}/fits/${fit.id}/export?format=latex&table=everything`);
    expect(table.status).toBe(400);
    expect(table.body.error.issues[0].path).toEqual(['table']);
    expect(table.body.error.issues[0].message).toMatch(/yields.*systematics.*pulls/);
    expect((await reader.get(`${C}/fits/${fit.id}/export?format=latex`)).status).toBe(400);
  });

  describe('while the analysis is blinded', () => {
    it('carries no observed count of a blinded region, and refuses a fit that read blinded data (409)', async () => {
      await markSignalCounts(t, 'vireon-search');
      const v = (await analyst.send('post', `${V}/versions`, { note: 'blinded tables' })).body.number;
      const fit = await runFit(V, v, { dataset: 'observed', controlOnly: true, impacts: 'quick', expected: false });
      expect(fit.state).toBe('succeeded');
      for (const table of ['yields', 'systematics', 'pulls', 'nuisance'])
        for (const format of ['csv', 'latex']) expect(MARK.test(await get(V, fit.id, format, table)), `${table} ${format}`).toBe(false);
      await t.database.db.update(fits).set({ regionsInFit: ['SR-core', 'CR-low'] }).where(eq(fits.id, fit.id));
      for (const table of ['yields', 'systematics', 'pulls'])
        for (const format of ['csv', 'latex']) expect((await reader.get(`${V}/fits/${fit.id}/export?format=${format}&table=${table}`)).status, `${table} ${format}`).toBe(409);
    });
  });
});
