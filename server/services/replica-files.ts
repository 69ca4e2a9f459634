import { z } from 'zod';
import { LIMITS } from '@shared/schemas/exchange';
import type { ModelIndex } from '../db/model.repository';
import { binCell, FileProblems, numberCell, readCsv } from '../uploads/csv';
import { looksLikeJson, type UploadedFile } from '../uploads/upload';

/**
 * A file of N alternative templates of one (region, process): CSV with the columns
 * region,process,template,bin,yield (one row per template and bin), or JSON
 * {"region", "process", "templates": [{"name", "yields": [...]}]}. Every template gives every bin
 * once; at least two templates. Any problem refuses the whole file, named by row and column.
 */
export type ReplicaSet = { region: string; process: string; names: string[]; templates: number[][] };

const replicaJsonSchema = z.strictObject({
  region: z.string().min(1),
  process: z.string().min(1),
  templates: z.array(z.strictObject({ name: z.string().min(1).max(64), yields: z.array(z.number().min(0).max(LIMITS.yield)) })),
});

export function readReplicaFile(file: UploadedFile, model: ModelIndex): ReplicaSet {
  const problems = new FileProblems(file.filename);
  const set = looksLikeJson(file) ? readJson(file, model, problems) : readCsvFile(file, model, problems);
  problems.throwIfAny();
  return set!;
}

function checkTemplate(model: ModelIndex, region: string, process: string, problems: FileProblems, line: number | null, prefix = '') {
  if (!model.regions.has(region)) problems.at(line, `${prefix}region`, `no region "${region}" in this analysis`);
  else if (!model.processes.has(process)) problems.at(line, `${prefix}process`, `no process "${process}" in this analysis`);
  else if (!model.template(region, process)) problems.at(line, `${prefix}process`, `region "${region}" has no template for process "${process}" to vary`);
  else return true;
  return false;
}

function readCsvFile(file: UploadedFile, model: ModelIndex, problems: FileProblems): ReplicaSet | null {
  const { rows } = readCsv(file.text, file.filename, { required: ['region', 'process', 'template', 'bin', 'yield'] }, problems);
  const first = rows[0];
  const region = first.get('region');
  const process = first.get('process');
  if (!checkTemplate(model, region, process, problems, first.line)) return null;
  const bins = model.bins(region);
  const byName = new Map<string, { yields: number[]; seen: Map<number, number>; line: number }>();
  for (const row of rows) {
    if (row.get('region') !== region || row.get('process') !== process) {
      problems.at(row.line, row.get('region') !== region ? 'region' : 'process', `a file holds the templates of one region and process ("${region}", "${process}" from row ${first.line})`);
      continue;
    }
    const name = row.get('template');
    if (!name) {
      problems.at(row.line, 'template', 'is empty: name the alternative template this row belongs to');
      continue;
    }
    if (!byName.has(name)) byName.set(name, { yields: new Array<number>(bins).fill(NaN), seen: new Map(), line: row.line });
    const t = byName.get(name)!;
    const bin = binCell(problems, row, { region, bins, of: `template "${name}"`, seen: t.seen });
    if (bin === null) continue;
    const value = numberCell(problems, row, 'yield', { min: 0, max: LIMITS.yield });
    if (row.get('yield') === '') problems.at(row.line, 'yield', 'is empty');
    if (value !== null) t.yields[bin - 1] = value;
  }
  for (const [name, t] of byName)
    if (t.seen.size !== bins) problems.at(t.line, 'template', `template "${name}" gives ${t.seen.size} bins but region "${region}" has ${bins}`);
  if (byName.size < 2) problems.at(null, 'template', `has ${byName.size} template${byName.size === 1 ? '' : 's'}; an envelope or a replica set needs at least two`);
  return { region, process, names: [...byName.keys()], templates: [...byName.values()].map((t) => t.yields) };
}

function readJson(file: UploadedFile, model: ModelIndex, problems: FileProblems): ReplicaSet | null {
  let doc: unknown;
  try {
    doc = JSON.parse(file.text);
  } catch (e) {
    problems.at(null, null, `the file is not valid JSON (${(e as Error).message})`);
    return null;
  }
  const parsed = replicaJsonSchema.safeParse(doc);
  if (!parsed.success) {
    for (const i of parsed.error.issues) problems.at(null, i.path.join('.') || 'file', i.message);
    return null;
  }
  const { region, process, templates } = parsed.data;
  if (!checkTemplate(model, region, process, problems, null)) return null;
  const bins = model.bins(region);
  templates.forEach((t, i) => {
    if (t.yields.length !== bins) problems.at(null, `templates.${i}.yields`, `template "${t.name}" has ${t.yields.length} values but region "${region}" has ${bins} bins`);
  });
  if (new Set(templates.map((t) => t.name)).size !== templates.length) problems.at(null, 'templates', 'two templates have the same name');
  if (templates.length < 2) problems.at(null, 'templates', `has ${templates.length} template${templates.length === 1 ? '' : 's'}; an envelope or a replica set needs at least two`);
  return { region, process, names: templates.map((t) => t.name), templates: templates.map((t) => t.yields) };
}
