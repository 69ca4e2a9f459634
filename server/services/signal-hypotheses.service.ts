import { modelConsistencyIssues, type ExchangeHypothesis, type ExchangeModel, type HypothesisEffect } from '@shared/schemas/exchange';
import {
  hypothesisEffectsSchema,
  hypothesisFieldsSchema,
  hypothesisParameterSchema,
  type HypothesisSummary,
  type HypothesisUploadResult,
  type SignalHypotheses,
  type SignalHypothesis,
} from '@shared/schemas/signal-hypotheses';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { insertUpload } from '../db/entries.repository';
import { indexModel, loadModelRows } from '../db/model.repository';
import { addRevision, type DbOrTx } from '../db/revisions.repository';
import {
  deleteHypothesisRow,
  exchangeHypothesis,
  hypothesesUsing,
  hypothesisByKey,
  saveHypothesisRow,
  setHypothesisParameterRow,
  type HypothesisParameter,
} from '../db/signal-hypotheses.repository';
import { conflict, notFound, unprocessable, zodIssues } from '../errors';
import { readUpload } from '../uploads/upload';
import { buildExchange } from './exchange-export.service';
import { readTemplatesCsv } from './template-files';

/**
 * The signal hypotheses of the live model (docs/exchange-file.md, "Signal hypotheses"): the
 * parameter they differ in, and each hypothesis, uploaded whole as a templates CSV with its
 * effects. A hypothesis is checked by the exchange file's own rules (modelConsistencyIssues) on
 * the model as it would be exported with it, so an import and an upload refuse the same things.
 * The model editor refuses a change that would leave a hypothesis without its template
 * (assertNoHypothesesOn).
 */

const sum = (values: number[]) => values.reduce((a, b) => a + b, 0);

const summary = (h: ExchangeHypothesis): HypothesisSummary => ({
  key: h.key,
  label: h.label ?? '',
  value: h.value,
  templates: h.templates.map((t) => ({ region: t.region, process: t.process, bins: t.nominal.length, total: sum(t.nominal) })),
  total: sum(h.templates.map((t) => sum(t.nominal))),
  effects: { scale: h.effects.filter((e) => e.kind === 'scale').length, shape: h.effects.filter((e) => e.kind === 'shape').length },
});

/** "a", "a and b", "a, b, c and 4 more": hypothesis keys in a message. */
function keyList(keys: string[]) {
  const quoted = keys.map((k) => `"${k}"`);
  if (quoted.length <= 4) return quoted.length > 1 ? `${quoted.slice(0, -1).join(', ')} and ${quoted.at(-1)}` : quoted.join('');
  return `${quoted.slice(0, 3).join(', ')} and ${quoted.length - 3} more`;
}

/** Where the hypotheses of an exported model break its rules, named by hypothesis. */
export function hypothesisIssues(model: ExchangeModel) {
  const points = model.signalHypotheses?.points ?? [];
  return modelConsistencyIssues(model)
    .filter((i) => i.path[0] === 'signalHypotheses')
    .map((i) => ({ hypothesis: typeof i.path[2] === 'number' ? (points[i.path[2]]?.key ?? null) : null, message: i.message }));
}

/**
 * A region, process or template that signal hypotheses replace stays until those hypotheses are
 * removed or replaced without it: a hypothesis is never left naming a template the model lacks.
 */
export async function assertNoHypothesesOn(db: DbOrTx, access: Access, on: { region?: string; process?: string }, what: string, todo: string) {
  const keys = await hypothesesUsing(db, access.analysis.id, on);
  if (keys.length)
    throw conflict(`${keys.length === 1 ? 'The signal hypothesis' : `${keys.length} signal hypotheses`} ${keyList(keys)} ${keys.length === 1 ? 'replaces' : 'replace'} ${what}. ${todo}`);
}

export async function getHypotheses(ctx: AppContext, access: Access): Promise<SignalHypotheses> {
  const model = await buildExchange(ctx.db, access.analysis, { withhold: true });
  return {
    parameter: access.analysis.hypothesisParameter ?? null,
    points: (model.signalHypotheses?.points ?? []).map(summary),
    issues: hypothesisIssues(model),
  };
}

export async function getHypothesis(ctx: AppContext, access: Access, key: string): Promise<SignalHypothesis> {
  const h = await hypothesisByKey(ctx.db, access.analysis.id, key);
  if (!h) throw notFound(`Signal hypothesis "${key}"`);
  return exchangeHypothesis(h);
}

export async function setHypothesisParameter(ctx: AppContext, access: Access, body: unknown): Promise<HypothesisParameter> {
  const parameter = hypothesisParameterSchema.parse(body);
  const before = access.analysis.hypothesisParameter;
  await ctx.db.transaction(async (tx) => {
    await setHypothesisParameterRow(tx, access.analysis.id, parameter);
    await addRevision(tx, {
      analysisId: access.analysis.id,
      authorId: access.userId,
      action: 'hypotheses.parameter',
      summary: `Set the parameter of the signal hypotheses to ${parameter.name}${parameter.unit ? ` (${parameter.unit})` : ''}.`,
      before,
      after: parameter,
    });
  });
  return parameter;
}

/** The `effects` form field: a JSON list of hypothesis effects, or none. */
function readEffects(raw: string | undefined): HypothesisEffect[] {
  if (raw === undefined || raw.trim() === '') return [];
  let value: unknown;
  try {
    value = JSON.parse(raw);
  } catch (e) {
    throw unprocessable('Nothing was saved. The effects are not valid JSON', [{ path: ['effects'], message: `is not valid JSON (${(e as Error).message}): give a list of effects as the exchange file writes them` }]);
  }
  const parsed = hypothesisEffectsSchema.safeParse(value);
  if (!parsed.success) throw unprocessable('Nothing was saved. The effects do not follow the exchange file', zodIssues(parsed.error).map((i) => ({ ...i, path: ['effects', ...i.path] })));
  return parsed.data;
}

/**
 * Checks a hypothesis against the model as it would be exported with it (in place of the one of
 * the same key), by the exchange file's rules; a problem is named by the form field to fix.
 */
function refuseIfInconsistent(model: ExchangeModel, parameter: HypothesisParameter, candidate: ExchangeHypothesis, filename: string) {
  const others = (model.signalHypotheses?.points ?? []).filter((p) => p.key !== candidate.key);
  const at = others.length;
  const issues = modelConsistencyIssues({ ...model, version: 2, signalHypotheses: { parameter, points: [...others, candidate] } })
    .filter((i) => i.path[0] === 'signalHypotheses' && i.path[2] === at)
    .map(({ path, message }) => {
      const [field, index, ...rest] = path.slice(3);
      if (field === 'value') {
        const same = others.find((p) => p.value === candidate.value);
        return { path: ['value'], message: `${message}${same ? ` ("${same.key}"): give another value, or replace "${same.key}" under its key` : ''}` };
      }
      if (field === 'templates') return { path: ['file'], message: `"${filename}": ${message}` };
      return { path: index === undefined ? ['effects'] : ['effects', index, ...rest], message };
    });
  if (issues.length) throw unprocessable(`Nothing was saved. The signal hypothesis "${candidate.key}" does not fit the model`, issues);
}

/**
 * Creates or replaces one signal hypothesis from its templates CSV (the templates file's columns:
 * region,process,bin,nominal[,variance]) and its effects (JSON, optional): previewed (save =
 * false) or saved, with the file and a revision, in one transaction.
 */
export async function saveHypothesis(ctx: AppContext, access: Access, body: unknown, file: Express.Multer.File | undefined, save: boolean): Promise<HypothesisUploadResult> {
  const fields = hypothesisFieldsSchema.parse({ ...(body as object) });
  const parameter = access.analysis.hypothesisParameter;
  if (!parameter)
    throw unprocessable('Set the parameter the signal hypotheses differ in (its name and unit, e.g. mass in GeV) before adding one', [{ path: ['parameter'], message: 'is not set' }]);
  const upload = readUpload(file);
  const effects = readEffects(fields.effects);
  const check = async (db: DbOrTx) => {
    const templates = readTemplatesCsv(upload.text, upload.filename, indexModel(await loadModelRows(db, access.analysis.id)));
    const candidate: ExchangeHypothesis = {
      key: fields.key,
      ...(fields.label ? { label: fields.label } : {}),
      value: fields.value,
      templates: templates.map((t) => ({ region: t.region, process: t.process, nominal: t.nominal, ...(t.variance ? { variance: t.variance } : {}) })),
      effects,
    };
    refuseIfInconsistent(await buildExchange(db, access.analysis, { withhold: false }), parameter, candidate, upload.filename);
    return { candidate, existing: await hypothesisByKey(db, access.analysis.id, fields.key) };
  };
  if (!save) {
    const { candidate, existing } = await check(ctx.db);
    return { saved: false, replaced: !!existing, hypothesis: summary(candidate) };
  }
  return ctx.db.transaction(async (tx) => {
    const { candidate, existing } = await check(tx);
    await insertUpload(tx, { analysisId: access.analysis.id, entryId: null, userId: access.userId, filename: upload.filename, mediaType: upload.mediaType, sha256: upload.sha256, size: upload.size, content: upload.text });
    await saveHypothesisRow(tx, existing?.id ?? null, { analysisId: access.analysis.id, key: candidate.key, label: fields.label, value: candidate.value, templates: candidate.templates, effects: candidate.effects });
    const where = `${parameter.name} = ${candidate.value}${parameter.unit ? ` ${parameter.unit}` : ''}`;
    await addRevision(tx, {
      analysisId: access.analysis.id,
      authorId: access.userId,
      action: 'hypothesis.saved',
      summary: `${existing ? 'Replaced' : 'Added'} the signal hypothesis "${candidate.key}" (${where}) from "${upload.filename}" (SHA-256 ${upload.sha256.slice(0, 12)}…): ${candidate.templates.length} template${candidate.templates.length === 1 ? '' : 's'}, ${effects.length} effect${effects.length === 1 ? '' : 's'}.`,
      before: existing ? { key: existing.key, value: existing.value } : undefined,
      after: { key: candidate.key, value: candidate.value, sha256: upload.sha256, templates: candidate.templates.map((t) => `${t.region}/${t.process}`) },
    });
    return { saved: true, replaced: !!existing, hypothesis: summary(candidate) };
  });
}

export async function deleteHypothesis(ctx: AppContext, access: Access, key: string) {
  const h = await hypothesisByKey(ctx.db, access.analysis.id, key);
  if (!h) throw notFound(`Signal hypothesis "${key}"`);
  await ctx.db.transaction(async (tx) => {
    await deleteHypothesisRow(tx, h.id);
    await addRevision(tx, { analysisId: access.analysis.id, authorId: access.userId, action: 'hypothesis.deleted', summary: `Removed the signal hypothesis "${key}" (value ${h.value}).`, before: { key, value: h.value } });
  });
}
