import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { setPlotLabels } from '../services/analyses.service';
import { approvalPack } from '../services/pack.service';
import { idParam, route, type ApiRoute } from './route';

const fitIdParam = idParam('fit id');

/** The plot labels every chart carries, and a fit's approval pack (docs/approval.md). */
export const packRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('put', '/api/analyses/:slug/plot-labels', auth.may('version.approve'), async (req, res) => {
    res.json(await setPlotLabels(ctx, accessOf(req), req.body));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/pack', auth.may('analysis.read'), async (req, res) => {
    const out = await approvalPack(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), req.query.format);
    res.type(out.type).attachment(out.filename).send(out.body);
  }),
];
