import { variationJsonSchema, type VariationOptions } from '@shared/schemas/register';
import { flatRatios, scaleWarnings, shapeWarnings, type VariationWarning } from '@shared/validation/variation-warnings';
import { LIMITS } from '@shared/schemas/exchange';
import type { ModelIndex } from '../db/model.repository';
import { binCell, FileProblems, numberCell, readCsv } from '../uploads/csv';
import { looksLikeJson, type UploadedFile } from '../uploads/upload';
import { shiftPrecision, SIGNIFICANT_P, type ShiftPrecision } from '../variations/precision';

/**
 * Variation files: CSV (columns region,process,kind,bin,up,down; docs/uploads.md) or JSON
 * ({effects: [...]}, the exchange file's effect objects). Both are read into one form, checked
 * against the analysis's model, then transformed by the chosen options. Any problem refuses
 * the whole file.
 */

type Where = { line: number | null; column: string | null };
export type RawEffect = {
  region: string;
  process: string;
  kind: 'scale' | 'shape';
  up: number | number[];
  /** null: one-sided, needs the mirror option */
  down: number | number[] | null;
  /** per-bin variance of each shift (shape effects), when the file gives it */
  upShiftVariance: number[] | null;
  downShiftVariance: number[] | null;
  where: Where;
};
export type ReadyEffect = {
  region: string;
  process: string;
  kind: 'scale' | 'shape';
  up: number | number[];
  down: number | number[];
  nominal: number[];
  edges: number[];
  warnings: VariationWarning[];
  transformed: string[];
  /** the variance of each shift per bin, as given (after the options), or null */
  shiftVariance: { up: number[] | null; down: number[] | null };
  /** the shifts' errors and χ² tests (shape effects) */
  precision: { up: ShiftPrecision; down: ShiftPrecision } | null;
};

const VARIATION_COLUMNS = ['region', 'process', 'kind', 'bin', 'up', 'down'];
const SHIFT_VARIANCE_COLUMNS = ['up_shift_variance', 'down_shift_variance'] as const;

function readCsvVariations(file: UploadedFile, model: ModelIndex, problems: FileProblems): RawEffect[] {
  const { rows } = readCsv(file.text, file.filename, { required: VARIATION_COLUMNS, optional: [...SHIFT_VARIANCE_COLUMNS] }, problems);
  const groups = new Map<string, { region: string; process: string; kind: 'scale' | 'shape'; rows: typeof rows }>();
  for (const row of rows) {
    const region = row.get('region');
    const process = row.get('process');
    const kind = row.get('kind').toLowerCase();
    let ok = true;
    if (!model.regions.has(region)) {
      problems.at(row.line, 'region', `no region "${region}" in this analysis (regions: ${[...model.regions.keys()].join(', ')})`);
      ok = false;
    }
    if (!model.processes.has(process)) {
      problems.at(row.line, 'process', `no process "${process}" in this analysis (processes: ${[...model.processes.keys()].join(', ')})`);
      ok = false;
    }
    if (kind !== 'scale' && kind !== 'shape') {
      problems.at(row.line, 'kind', `"${kind}" is neither "scale" nor "shape"`);
      ok = false;
    }
    if (!ok) continue;
    if (!model.template(region, process)) {
      problems.at(row.line, 'process', `region "${region}" has no template for process "${process}" to vary`);
      continue;
    }
    const id = `${region}/${process}/${kind}`;
    if (!groups.has(id)) groups.set(id, { region, process, kind: kind as 'scale' | 'shape', rows: [] });
    groups.get(id)!.rows.push(row);
  }

  const effects: RawEffect[] = [];
  for (const g of groups.values()) {
    const first = g.rows[0];
    if (g.kind === 'scale') {
      g.rows.slice(1).forEach((r) => problems.at(r.line, 'region', `a second scale row for region "${g.region}", process "${g.process}" (first in row ${first.line})`));
      if (first.get('bin') !== '') problems.at(first.line, 'bin', 'leave the bin empty in a scale row: a ratio applies to every bin');
      const up = numberCell(problems, first, 'up', { positive: true, min: 1 / LIMITS.ratio, max: LIMITS.ratio });
      const down = numberCell(problems, first, 'down', { positive: true, min: 1 / LIMITS.ratio, max: LIMITS.ratio });
      if (first.get('up') === '') problems.at(first.line, 'up', 'is empty: give the ratio at +1σ (e.g. 1.04)');
      for (const column of SHIFT_VARIANCE_COLUMNS) if (first.get(column)) problems.at(first.line, column, 'leave it empty in a scale row: a shift variance is given per bin of a shape effect');
      if (up !== null) effects.push({ region: g.region, process: g.process, kind: 'scale', up, down, upShiftVariance: null, downShiftVariance: null, where: { line: first.line, column: null } });
      continue;
    }
    const bins = model.bins(g.region);
    const up = new Array<number>(bins).fill(NaN);
    const down = new Array<number>(bins).fill(NaN);
    const seen = new Map<number, number>();
    let withDown = 0;
    const variances = { up_shift_variance: new Array<number>(bins).fill(NaN), down_shift_variance: new Array<number>(bins).fill(NaN) };
    const given = { up_shift_variance: 0, down_shift_variance: 0 };
    for (const r of g.rows) {
      const bin = binCell(problems, r, { region: g.region, bins, of: `region "${g.region}", process "${g.process}"`, seen, emptyHint: `is empty: a shape row gives one bin (1 to ${bins})` });
      if (bin === null) continue;
      const u = numberCell(problems, r, 'up', { min: 0, max: LIMITS.yield });
      if (r.get('up') === '') problems.at(r.line, 'up', 'is empty: give the yield at +1σ in this bin');
      const d = numberCell(problems, r, 'down', { min: 0, max: LIMITS.yield });
      if (r.get('down') !== '') withDown++;
      if (u !== null) up[bin - 1] = u;
      if (d !== null) down[bin - 1] = d;
      for (const column of SHIFT_VARIANCE_COLUMNS) {
        if (!r.get(column)) continue;
        given[column]++;
        const v = numberCell(problems, r, column, { min: 0, max: LIMITS.variance });
        if (v !== null) variances[column][bin - 1] = v;
      }
    }
    for (const column of SHIFT_VARIANCE_COLUMNS)
      if (given[column] > 0 && given[column] < g.rows.length)
        problems.at(first.line, column, `is given in ${given[column]} of ${g.rows.length} rows of region "${g.region}", process "${g.process}": give it in every row, or in none`);
    const missing = [...Array(bins).keys()].map((b) => b + 1).filter((b) => !seen.has(b));
    if (missing.length && seen.size > 0) {
        problems.at(null, null, `region "${g.region}" has ${bins} bins but the file gives ${seen.size} for process "${g.process}" (missing bin ${missing.slice(0, 10).join(', ')}${missing.length > 10 ? ', …' : ''})`);
    }
    if (withDown > 0 && withDown < g.rows.length)
      problems.at(first.line, 'down', `is given in ${withDown} of ${g.rows.length} rows of region "${g.region}", process "${g.process}": give it in every row, or in none for a one-sided variation`);
    effects.push({
      region: g.region,
      process: g.process,
      kind: 'shape',
      up,
      down: withDown ? down : null,
      upShiftVariance: given.up_shift_variance ? variances.up_shift_variance : null,
      downShiftVariance: given.down_shift_variance ? variances.down_shift_variance : null,
      where: { line: first.line, column: null },
    });
  }
  return effects;
}

function readJsonVariations(file: UploadedFile, model: ModelIndex, problems: FileProblems): RawEffect[] {
  let doc: unknown;
  try {
    doc = JSON.parse(file.text);
  } catch (e) {
    problems.at(null, null, `the file is not valid JSON (${(e as Error).message})`);
    return [];
  }
  const parsed = variationJsonSchema.safeParse(doc);
  if (!parsed.success) {
    for (const i of parsed.error.issues) problems.at(null, i.path.join('.') || 'file', i.message);
    return [];
  }
  const effects: RawEffect[] = [];
  parsed.data.effects.forEach((e, i) => {
    const where = { line: null, column: `effects.${i}` };
    if (!model.regions.has(e.region)) return problems.at(null, `effects.${i}.region`, `no region "${e.region}" in this analysis`);
    if (!model.processes.has(e.process)) return problems.at(null, `effects.${i}.process`, `no process "${e.process}" in this analysis`);
    if (!model.template(e.region, e.process)) return problems.at(null, `effects.${i}.process`, `region "${e.region}" has no template for process "${e.process}" to vary`);
    if (e.kind === 'shape') {
      const bins = model.bins(e.region);
      for (const side of ['up', 'down', 'up_shift_variance', 'down_shift_variance'] as const) {
        const values = e[side];
        if (values && values.length !== bins) problems.at(null, `effects.${i}.${side}`, `has ${values.length} values but region "${e.region}" has ${bins} bins`);
      }
      effects.push({ region: e.region, process: e.process, kind: e.kind, up: e.up, down: e.down ?? null, upShiftVariance: e.up_shift_variance ?? null, downShiftVariance: e.down_shift_variance ?? null, where });
      return;
    }
    effects.push({ region: e.region, process: e.process, kind: e.kind, up: e.up, down: e.down ?? null, upShiftVariance: null, downShiftVariance: null, where });
  });
  return effects;
}

const mirrorShape = (nominal: number[], up: number[]) => nominal.map((n, b) => Math.max(0, 2 * n - up[b]));

/** Applies the options and computes each effect's warnings. */
function prepare(raw: RawEffect, options: Required<VariationOptions>, model: ModelIndex, problems: FileProblems): ReadyEffect | null {
  const template = model.template(raw.region, raw.process)!;
  const nominal = template.nominal;
  const edges = model.regions.get(raw.region)!.edges;
  const transformed: string[] = [];
  let { kind, up } = raw;
  let down = raw.down;
  let upVar = raw.upShiftVariance;
  let downVar = raw.downShiftVariance;
  if (down === null) {
    if (!options.mirror) {
      problems.at(raw.where.line, raw.where.line ? 'down' : `${raw.where.column}.down`, `no down variation for region "${raw.region}", process "${raw.process}": give it, or choose the option to mirror one-sided variations`);
      return null;
    }
    // mirror: a scale ratio κ becomes 1/κ (symmetric in log space); a template ν+ becomes 2ν0 − ν+ (clipped at 0)
    down = kind === 'scale' ? 1 / (up as number) : mirrorShape(nominal, up as number[]);
    // the mirrored shift is the up shift negated: the same variance
    downVar = upVar;
    transformed.push(kind === 'scale' ? 'down mirrored as 1/up' : 'down mirrored as 2 × nominal − up');
  } else if (options.symmetrise) {
    if (kind === 'scale') {
      const k = Math.exp((Math.log(up as number) - Math.log(down as number)) / 2);
      up = k;
      down = 1 / k;
    } else {
      const u = up as number[];
      const d = down as number[];
      up = nominal.map((n, b) => n + (u[b] - d[b]) / 2);
      down = nominal.map((n, b) => Math.max(0, n - (u[b] - d[b]) / 2));
      // half the difference of the shifts, taken as independent
      if (upVar && downVar) upVar = downVar = upVar.map((v, b) => (v + downVar![b]) / 4);
      else upVar = downVar = null;
    }
    transformed.push('symmetrised: nominal ± half the up−down difference');
  }
  if (kind === 'shape' && options.flatToScale) {
    const flat = flatRatios(nominal, up as number[], down as number[]);
    if (flat) {
      kind = 'scale';
      up = flat.up;
      down = flat.down;
      transformed.push(`flat shape stored as a scale effect (×${flat.up.toFixed(4)} / ×${flat.down.toFixed(4)})`);
      upVar = downVar = null;
    }
  }
  const warnings = kind === 'scale' ? scaleWarnings(up as number, down as number) : shapeWarnings(nominal, up as number[], down as number[]);
  const precision = kind === 'shape' ? shapePrecision(nominal, up as number[], down as number[], { up: upVar, down: downVar }, template.variance) : null;
  // a flat shape is already flagged as one (better as a scale effect)
  if (precision && !warnings.some((w) => w.code === 'flat-shape')) warnings.push(...noiseWarnings(precision));
  return { region: raw.region, process: raw.process, kind, up, down, nominal, edges, warnings, transformed, shiftVariance: { up: upVar, down: downVar }, precision };
}

/** The precision of both shifts of a shape effect. */
export function shapePrecision(nominal: number[], up: number[], down: number[], shiftVariance: { up: number[] | null; down: number[] | null }, templateVariance: number[] | null) {
  return { up: shiftPrecision(nominal, up, shiftVariance.up, templateVariance), down: shiftPrecision(nominal, down, shiftVariance.down, templateVariance) };
}

/** A shape that neither side makes significant over its noise, against a flat shape: a candidate for smoothing or a scale effect. */
export function noiseWarnings(precision: { up: ShiftPrecision; down: ShiftPrecision }): VariationWarning[] {
  const { up, down } = precision;
  if (!up.againstFlat || !down.againstFlat) return [];
  if (up.againstFlat.p <= SIGNIFICANT_P || down.againstFlat.p <= SIGNIFICANT_P) return [];
  const estimated = up.source === 'estimated' || down.source === 'estimated' ? ' (errors estimated from the template variance, as the file gives no shift variance)' : '';
  const f = (c: { chi2: number; dof: number; p: number }) => `χ² ${c.chi2.toFixed(1)} for ${c.dof} dof, p = ${c.p.toFixed(2)}`;
  return [
    {
      code: 'within-noise',
      message: `The shape is not significant over its statistical noise against a flat shift (up: ${f(up.againstFlat)}; down: ${f(down.againstFlat)})${estimated}: smooth it, or enter it as a scale effect.`,
    },
  ];
}

/** Reads, checks and transforms a variation file; throws (422, every problem named) if anything is wrong. */
export function readVariationFile(file: UploadedFile, model: ModelIndex, options: Required<VariationOptions>): ReadyEffect[] {
  const problems = new FileProblems(file.filename);
  const raw = looksLikeJson(file) ? readJsonVariations(file, model, problems) : readCsvVariations(file, model, problems);
  problems.throwIfAny();
  const ready = raw.map((r) => prepare(r, options, model, problems)).filter((r): r is ReadyEffect => r !== null);
  const seen = new Set<string>();
  for (const e of ready) {
    const id = `${e.region}/${e.process}/${e.kind}`;
    if (seen.has(id)) problems.at(null, null, `two ${e.kind} effects on region "${e.region}", process "${e.process}" (a flat shape turned into a scale effect collides with a scale row)`);
    seen.add(id);
  }
  if (!ready.length && !problems.any) problems.at(null, null, 'has no variations');
  problems.throwIfAny();
  return ready;
}
