import { exchangeModelSchema, type ExchangeModel, type ExchangeModelInput } from '@shared/schemas/exchange';
import type { EntryState } from '@shared/schemas/api';
import { largestEffectPct, scaleWarnings, shapeWarnings } from '@shared/validation/variation-warnings';
import { addRevision, type DbOrTx, type Tx } from '../db/revisions.repository';
import { insertEffects, insertFloatingNorms, insertGroups, insertParametersOfInterest, insertProcesses, insertRegions, insertTemplates, regionCount } from '../db/exchange.repository';
import { insertEntry } from '../db/entries.repository';
import { insertHypotheses, setHypothesisParameterRow } from '../db/signal-hypotheses.repository';
import { conflict, unprocessable, zodIssues } from '../errors';

export type EntryMeta = { ownerId?: number | null; state?: EntryState; justification?: string; references?: string[] };


/** Parses an exchange document with the shared schema; a bad one is refused with the failing paths. */
function parseExchange(document: unknown): ExchangeModel {
  const parsed = exchangeModelSchema.safeParse(document);
  if (!parsed.success) throw unprocessable('The model file is not valid', zodIssues(parsed.error));
  return parsed.data;
}

/**
 * Writes a whole model into an analysis that has none yet, in one transaction: regions, processes,
 * floating normalisations, parameters of interest besides μ (version 2), templates, groups, register entries with their effects and warnings,
 * the signal hypotheses with their parameter (version 2), a revision per entry and, for an
 * uploaded `file`, the model's own revision naming it. Nothing is
 * written if any step fails, so a crash never leaves a model without the revision that says where
 * it came from.
 */
export async function importModel(
  db: DbOrTx,
  analysisId: number,
  document: ExchangeModelInput | unknown,
  options: { authorId: number | null; entryMeta?: Record<string, EntryMeta>; file?: { filename: string; sha256: string } },
) {
  const model = parseExchange(document);
  return db.transaction(async (tx) => {
    if ((await regionCount(tx, analysisId)) > 0) throw conflict('This analysis already has a model. Import into a new analysis.');
    const counts = await writeModel(tx, analysisId, model, options);
    if (options.file)
      await addRevision(tx, {
        analysisId,
        authorId: options.authorId,
        action: 'model.imported',
        summary: `Imported the model file "${options.file.filename}" (SHA-256 ${options.file.sha256.slice(0, 12)}…): ${counts.regions} regions, ${counts.processes} processes, ${counts.entries} register entries${counts.parametersOfInterest ? `, ${counts.parametersOfInterest} parameter${counts.parametersOfInterest === 1 ? '' : 's'} of interest besides μ` : ''}${counts.hypotheses ? `, ${counts.hypotheses} signal hypotheses` : ''}.`,
      });
    return counts;
  });
}

async function writeModel(tx: Tx, analysisId: number, model: ExchangeModel, options: { authorId: number | null; entryMeta?: Record<string, EntryMeta> }) {
  const regionRows = await insertRegions(
    tx,
    model.regions.map((r, i) => ({
      analysisId,
      key: r.key,
      label: r.label ?? '',
      role: r.role,
      observable: r.observable.name,
      unit: r.observable.unit,
      edges: r.edges,
      observed: r.observed ?? null,
      position: i,
    })),
  );
  const processRows = await insertProcesses(
    tx,
    model.processes.map((p, i) => ({ analysisId, key: p.key, label: p.label ?? '', kind: p.kind, colour: p.colour ?? null, position: i })),
  );
  const normRows = await insertFloatingNorms(
    tx,
    model.floatingNorms.map((f) => ({ analysisId, key: f.key, label: f.label ?? '', start: f.start, min: f.min, max: f.max })),
  );
  await insertParametersOfInterest(
    tx,
    (model.parametersOfInterest ?? []).map((q, i) => ({
      analysisId,
      key: q.key,
      label: q.label ?? '',
      start: q.start,
      min: q.min,
      max: q.max,
      targets: q.targets.map((t) => ({ region: t.region, process: t.process })),
      position: i,
    })),
  );
  const regionId = new Map(regionRows.map((r) => [r.key, r.id]));
  const processId = new Map(processRows.map((p) => [p.key, p.id]));
  const normOf = new Map<string, number>();
  model.floatingNorms.forEach((f, i) => f.targets.forEach((t) => normOf.set(`${t.region}/${t.process}`, normRows[i].id)));

  await insertTemplates(
    tx,
    model.templates.map((t) => ({
      analysisId,
      regionId: regionId.get(t.region)!,
      processId: processId.get(t.process)!,
      nominal: t.nominal,
      variance: t.variance ?? null,
      floatingNormId: normOf.get(`${t.region}/${t.process}`) ?? null,
    })),
  );
  const nominalOf = new Map(model.templates.map((t) => [`${t.region}/${t.process}`, t.nominal]));

  const groupNames = [...new Set(model.systematics.map((s) => s.group).filter((g): g is string => !!g))];
  const groupRows = await insertGroups(
    tx,
    groupNames.map((name, i) => ({ analysisId, name, position: i })),
  );
  const groupId = new Map(groupRows.map((g) => [g.name, g.id]));

  for (const s of model.systematics) {
    const meta = options.entryMeta?.[s.key] ?? {};
    const entry = await insertEntry(tx, {
      analysisId,
      key: s.key,
      label: s.label ?? s.key,
      groupId: s.group ? groupId.get(s.group)! : null,
      ownerId: meta.ownerId ?? null,
      description: s.description ?? '',
      justification: meta.justification ?? '',
      references: meta.references ?? [],
      state: meta.state ?? 'draft',
    });
    await insertEffects(
      tx,
      s.effects.map((e) => ({
        entryId: entry.id,
        regionId: regionId.get(e.region)!,
        processId: processId.get(e.process)!,
        kind: e.kind,
        up: e.up,
        down: e.down,
        warnings: e.kind === 'scale' ? scaleWarnings(e.up, e.down) : shapeWarnings(nominalOf.get(`${e.region}/${e.process}`)!, e.up, e.down),
        largestPct: largestEffectPct(e.kind, e.up, e.down, nominalOf.get(`${e.region}/${e.process}`)),
        nominalAtUpload: e.kind === 'shape' ? nominalOf.get(`${e.region}/${e.process}`)! : null,
      })),
    );
    await addRevision(tx, {
      analysisId,
      entryId: entry.id,
      authorId: options.authorId,
      action: 'imported',
      summary: `Imported with ${s.effects.length} effect${s.effects.length === 1 ? '' : 's'} from the model file "${model.name}".`,
      after: { key: s.key, label: s.label, group: s.group, state: meta.state ?? 'draft', effects: s.effects.length },
    });
  }
  const hypotheses = model.signalHypotheses;
  if (hypotheses) {
    await setHypothesisParameterRow(tx, analysisId, hypotheses.parameter);
    await insertHypotheses(
      tx,
      hypotheses.points.map((h) => ({ analysisId, key: h.key, label: h.label ?? '', value: h.value, templates: h.templates, effects: h.effects })),
    );
  }
  return {
    regions: regionRows.length,
    processes: processRows.length,
    entries: model.systematics.length,
    parametersOfInterest: model.parametersOfInterest?.length ?? 0,
    hypotheses: hypotheses?.points.length ?? 0,
  };
}
