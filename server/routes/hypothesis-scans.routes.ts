import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { cancelHypothesisScan, getHypothesisScan, listHypothesisScans, startHypothesisScan } from '../services/hypothesis-scans.service';
import { idParam, route, type ApiRoute } from './route';

const scanIdParam = idParam('scan id');

/** Scans over signal hypotheses (shared/schemas/hypothesis-scan.ts). */
export const hypothesisScansRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/analyses/:slug/hypothesis-scans', auth.may('analysis.read'), async (req, res) => {
    res.json(await listHypothesisScans(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/hypothesis-scans', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await startHypothesisScan(ctx, accessOf(req), req.body));
  }),
  route('get', '/api/analyses/:slug/hypothesis-scans/:scanId', auth.may('analysis.read'), async (req, res) => {
    res.json(await getHypothesisScan(ctx, accessOf(req), scanIdParam.parse(req.params.scanId)));
  }),
  route('post', '/api/analyses/:slug/hypothesis-scans/:scanId/cancel', auth.may('fit.run'), async (req, res) => {
    res.json(await cancelHypothesisScan(ctx, accessOf(req), scanIdParam.parse(req.params.scanId)));
  }),
];
