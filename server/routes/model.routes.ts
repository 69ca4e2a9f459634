import type { AppContext } from '../context';
import { baseUrl } from './base-url';
import { accessOf, type authorizer } from '../auth/authorize';
import { singleFile, readUpload } from '../uploads/upload';
import { buildExchange } from '../services/exchange-export.service';
import { importModel } from '../services/exchange-import.service';
import { unprocessable } from '../errors';
import {
  createFloatingNorm,
  createProcess,
  createRegion,
  deleteFloatingNorm,
  deleteProcess,
  deleteRegion,
  deleteTemplate,
  putTemplate,
  setObserved,
  updateProcess,
  updateRegion,
  uploadModelCsv,
} from '../services/model-edit.service';
import { deleteHypothesis, getHypotheses, getHypothesis, saveHypothesis, setHypothesisParameter } from '../services/signal-hypotheses.service';
import { wantsSave } from './base-url';
import { route, type ApiRoute } from './route';

export const modelRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => {
  const file = singleFile(ctx.config);
  const edit = auth.may('model.edit');
  const p = (req: { params: Record<string, unknown> }, name: string) => String(req.params[name]);
  return [
    route('post', '/api/analyses/:slug/regions', edit, async (req, res) => {
      res.status(201).json(await createRegion(ctx, accessOf(req), req.body));
    }),
    route('patch', '/api/analyses/:slug/regions/:key', edit, async (req, res) => {
      res.json(await updateRegion(ctx, accessOf(req), p(req, 'key'), req.body));
    }),
    route('delete', '/api/analyses/:slug/regions/:key', edit, async (req, res) => {
      await deleteRegion(ctx, accessOf(req), p(req, 'key'));
      res.status(204).end();
    }),
    route('put', '/api/analyses/:slug/regions/:key/observed', edit, async (req, res) => {
      res.json(await setObserved(ctx, accessOf(req), p(req, 'key'), req.body));
    }),
    route('post', '/api/analyses/:slug/processes', edit, async (req, res) => {
      res.status(201).json(await createProcess(ctx, accessOf(req), req.body));
    }),
    route('patch', '/api/analyses/:slug/processes/:key', edit, async (req, res) => {
      res.json(await updateProcess(ctx, accessOf(req), p(req, 'key'), req.body));
    }),
    route('delete', '/api/analyses/:slug/processes/:key', edit, async (req, res) => {
      await deleteProcess(ctx, accessOf(req), p(req, 'key'));
      res.status(204).end();
    }),
    route('post', '/api/analyses/:slug/floating-norms', edit, async (req, res) => {
      res.status(201).json(await createFloatingNorm(ctx, accessOf(req), req.body));
    }),
    route('delete', '/api/analyses/:slug/floating-norms/:key', edit, async (req, res) => {
      await deleteFloatingNorm(ctx, accessOf(req), p(req, 'key'));
      res.status(204).end();
    }),
    route('put', '/api/analyses/:slug/templates/:region/:process', edit, async (req, res) => {
      res.json(await putTemplate(ctx, accessOf(req), p(req, 'region'), p(req, 'process'), req.body, baseUrl(ctx, req)));
    }),
    route('delete', '/api/analyses/:slug/templates/:region/:process', edit, async (req, res) => {
      await deleteTemplate(ctx, accessOf(req), p(req, 'region'), p(req, 'process'));
      res.status(204).end();
    }),
    route('post', '/api/analyses/:slug/model/csv', edit, file, async (req, res) => {
      const save = wantsSave(req);
      res.status(save ? 201 : 200).json(await uploadModelCsv(ctx, accessOf(req), req.query.kind, req.file, save, baseUrl(ctx, req)));
    }),

    // signal hypotheses: the parameter they differ in, and each one uploaded whole (CSV + effects)
    route('get', '/api/analyses/:slug/signal-hypotheses', auth.may('analysis.read'), async (req, res) => {
      res.json(await getHypotheses(ctx, accessOf(req)));
    }),
    route('get', '/api/analyses/:slug/signal-hypotheses/:hypothesis', auth.may('analysis.read'), async (req, res) => {
      res.json(await getHypothesis(ctx, accessOf(req), p(req, 'hypothesis')));
    }),
    route('put', '/api/analyses/:slug/hypothesis-parameter', edit, async (req, res) => {
      res.json(await setHypothesisParameter(ctx, accessOf(req), req.body));
    }),
    route('post', '/api/analyses/:slug/signal-hypotheses', edit, file, async (req, res) => {
      const save = wantsSave(req);
      res.status(save ? 201 : 200).json(await saveHypothesis(ctx, accessOf(req), req.body, req.file, save));
    }),
    route('delete', '/api/analyses/:slug/signal-hypotheses/:hypothesis', edit, async (req, res) => {
      await deleteHypothesis(ctx, accessOf(req), p(req, 'hypothesis'));
      res.status(204).end();
    }),

    route('get', '/api/analyses/:slug/exchange', auth.may('analysis.read'), async (req, res) => {
      const access = accessOf(req);
      res.attachment(`${access.analysis.slug}.model.json`).json(await buildExchange(ctx.db, access.analysis, { withhold: true }));
    }),
    route('post', '/api/analyses/:slug/exchange', edit, file, async (req, res) => {
      const access = accessOf(req);
      const upload = readUpload(req.file);
      let document: unknown;
      try {
        document = JSON.parse(upload.text);
      } catch (e) {
        throw unprocessable(`Nothing was imported: "${upload.filename}" is not valid JSON (${(e as Error).message}).`);
      }
      res.status(201).json(await importModel(ctx.db, access.analysis.id, document, { authorId: access.userId, file: upload }));
    }),
  ];
};
