import { LIMITS } from '@shared/schemas/exchange';
import type { ModelIndex } from '../db/model.repository';
import { binCell, numberCell, readCsv } from '../uploads/csv';

/**
 * The model's per-bin CSV files (docs/uploads.md): templates (columns region,process,bin,nominal
 * and an optional variance), read by the model upload and by a signal hypothesis's upload, and
 * observed counts (region,bin,observed). Every bin of a template or region is given once; any
 * problem refuses the whole file, named by row and column.
 */

export type TemplateChange = { region: string; process: string; nominal: number[]; variance: number[] | null };

export function readTemplatesCsv(text: string, filename: string, model: ModelIndex): TemplateChange[] {
  const { rows, problems } = readCsv(text, filename, { required: ['region', 'process', 'bin', 'nominal'], optional: ['variance'] });
  const groups = new Map<string, { region: string; process: string; nominal: number[]; variance: number[]; filled: Map<number, number>; withVariance: number; rows: number }>();
  for (const row of rows) {
    const region = row.get('region');
    const process = row.get('process');
    if (!model.regions.has(region)) problems.at(row.line, 'region', `no region "${region}" in this analysis`);
    if (!model.processes.has(process)) problems.at(row.line, 'process', `no process "${process}" in this analysis`);
    if (!model.regions.has(region) || !model.processes.has(process)) continue;
    const bins = model.bins(region);
    const id = `${region}/${process}`;
    if (!groups.has(id)) groups.set(id, { region, process, nominal: Array(bins).fill(0), variance: Array(bins).fill(0), filled: new Map(), withVariance: 0, rows: 0 });
    const g = groups.get(id)!;
    g.rows++;
    const bin = binCell(problems, row, { region, bins, of: `region "${region}", process "${process}"`, seen: g.filled });
    if (bin === null) continue;
    const nominal = numberCell(problems, row, 'nominal', { min: 0, max: LIMITS.yield });
    if (row.get('nominal') === '') problems.at(row.line, 'nominal', 'is empty');
    const variance = numberCell(problems, row, 'variance', { min: 0, max: LIMITS.variance });
    if (row.get('variance') !== '') g.withVariance++;
    if (nominal !== null) g.nominal[bin - 1] = nominal;
    if (variance !== null) g.variance[bin - 1] = variance;
  }
  for (const g of groups.values()) {
    const bins = model.bins(g.region);
    if (g.filled.size && g.filled.size !== bins) problems.at(null, null, `region "${g.region}" has ${bins} bins but the file gives ${g.filled.size} for process "${g.process}"`);
    if (g.withVariance && g.withVariance !== g.rows) problems.at(null, 'variance', `is given in ${g.withVariance} of ${g.rows} rows of region "${g.region}", process "${g.process}": give it in every row or none`);
  }
  problems.throwIfAny();
  return [...groups.values()].map((g) => ({ region: g.region, process: g.process, nominal: g.nominal, variance: g.withVariance ? g.variance : null }));
}

export function readObservedCsv(text: string, filename: string, model: ModelIndex) {
  const { rows, problems } = readCsv(text, filename, { required: ['region', 'bin', 'observed'] });
  const groups = new Map<string, { counts: number[]; filled: Map<number, number> }>();
  for (const row of rows) {
    const region = row.get('region');
    if (!model.regions.has(region)) {
      problems.at(row.line, 'region', `no region "${region}" in this analysis`);
      continue;
    }
    const bins = model.bins(region);
    if (!groups.has(region)) groups.set(region, { counts: Array(bins).fill(0), filled: new Map() });
    const g = groups.get(region)!;
    const bin = binCell(problems, row, { region, bins, of: `region "${region}"`, seen: g.filled });
    if (bin === null) continue;
    const n = numberCell(problems, row, 'observed', { min: 0, max: LIMITS.yield });
    if (row.get('observed') === '') problems.at(row.line, 'observed', 'is empty');
    if (n !== null) g.counts[bin - 1] = n;
  }
  for (const [region, g] of groups) if (g.filled.size !== model.bins(region)) problems.at(null, null, `region "${region}" has ${model.bins(region)} bins but the file gives ${g.filled.size}`);
  problems.throwIfAny();
  return [...groups.entries()].map(([region, g]) => ({ region, counts: g.counts }));
}
