import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { cancelToys, getToyRun, listToyRuns, startToys } from '../services/toys.service';
import { idParam, route, type ApiRoute } from './route';

const fitIdParam = idParam('fit id');
const toyIdParam = idParam('toy run id');

/** Pseudo-experiments of a fit (shared/schemas/toys.ts). */
export const toysRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/analyses/:slug/fits/:fitId/toys', auth.may('analysis.read'), async (req, res) => {
    res.json(await listToyRuns(ctx, accessOf(req), fitIdParam.parse(req.params.fitId)));
  }),
  route('post', '/api/analyses/:slug/fits/:fitId/toys', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await startToys(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), req.body));
  }),
  route('get', '/api/analyses/:slug/toys/:toyId', auth.may('analysis.read'), async (req, res) => {
    res.json(await getToyRun(ctx, accessOf(req), toyIdParam.parse(req.params.toyId)));
  }),
  route('post', '/api/analyses/:slug/toys/:toyId/cancel', auth.may('fit.run'), async (req, res) => {
    res.json(await cancelToys(ctx, accessOf(req), toyIdParam.parse(req.params.toyId)));
  }),
];
