import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { createAnalysis, getOverview, listAnalyses } from '../services/analyses.service';
import { addMember, changeRole, listMembers, removeMember } from '../services/members.service';
import { getModelEncoded } from '../services/model.service';
import { listEntriesEncoded } from '../services/register.service';
import { baseUrl } from './base-url';
import { sendEncoded } from './encoded';
import { idParam, route, type ApiRoute } from './route';

const userIdParam = idParam('user id');

export const analysesRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/analyses', auth.signedIn, async (req, res) => {
    res.json(await listAnalyses(ctx, req.user!));
  }),
  route('post', '/api/analyses', auth.admin, async (req, res) => {
    res.status(201).json(await createAnalysis(ctx, req.body));
  }),
  route('get', '/api/analyses/:slug', auth.may('analysis.read'), async (req, res) => {
    res.json(await getOverview(ctx, accessOf(req)));
  }),

  route('get', '/api/analyses/:slug/members', auth.may('analysis.read'), async (req, res) => {
    res.json(await listMembers(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/members', auth.may('members.manage'), async (req, res) => {
    res.status(201).json(await addMember(ctx, accessOf(req), req.body, baseUrl(ctx, req)));
  }),
  route('patch', '/api/analyses/:slug/members/:userId', auth.may('members.manage'), async (req, res) => {
    res.json(await changeRole(ctx, accessOf(req), userIdParam.parse(req.params.userId), req.body, baseUrl(ctx, req)));
  }),
  route('delete', '/api/analyses/:slug/members/:userId', auth.may('members.manage'), async (req, res) => {
    await removeMember(ctx, accessOf(req), userIdParam.parse(req.params.userId), baseUrl(ctx, req));
    res.status(204).end();
  }),

  route('get', '/api/analyses/:slug/model', auth.may('analysis.read'), async (req, res) => {
    sendEncoded(req, res, await getModelEncoded(ctx, accessOf(req)));
  }),
  route('get', '/api/analyses/:slug/entries', auth.may('analysis.read'), async (req, res) => {
    sendEncoded(req, res, await listEntriesEncoded(ctx, accessOf(req)));
  }),
];
