import { z } from 'zod';
import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { cancelFit, compareFits, exportFit, getFitEncoded, listFits, startFit } from '../services/fits.service';
import { freezeVersion, listVersions } from '../services/versions.service';
import { fitPartNames, type FitPartName } from '@shared/schemas/fits';
import { sendEncoded } from './encoded';
import { getReviewSet, listReviewSets, startReviewSet } from '../services/review-sets.service';
import { getReproduction, reproduceFit } from '../services/reproduce.service';
import { idParam, route, type ApiRoute } from './route';

const fitIdParam = idParam('fit id');
const otherIdParam = idParam('other fit id');
const setIdParam = idParam('review set id');
const partParam = z.enum(fitPartNames as [FitPartName, ...FitPartName[]], { error: `the part in the address must be one of ${fitPartNames.join(', ')}` });

export const fitsRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => [
  route('get', '/api/analyses/:slug/versions', auth.may('analysis.read'), async (req, res) => {
    res.json(await listVersions(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/versions', auth.may('version.freeze'), async (req, res) => {
    res.status(201).json(await freezeVersion(ctx, accessOf(req), req.body));
  }),
  route('get', '/api/analyses/:slug/fits', auth.may('analysis.read'), async (req, res) => {
    res.json(await listFits(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/fits', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await startFit(ctx, accessOf(req), req.body));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId', auth.may('analysis.read'), async (req, res) => {
    sendEncoded(req, res, await getFitEncoded(ctx, accessOf(req), fitIdParam.parse(req.params.fitId)));
  }),
  // the large parts of a result, read by their own views
  route('get', '/api/analyses/:slug/fits/:fitId/parts/:part', auth.may('analysis.read'), async (req, res) => {
    const fitId = fitIdParam.parse(req.params.fitId);
    const part = partParam.parse(req.params.part);
    sendEncoded(req, res, await getFitEncoded(ctx, accessOf(req), fitId, part));
  }),
  route('post', '/api/analyses/:slug/fits/:fitId/cancel', auth.may('fit.run'), async (req, res) => {
    res.json(await cancelFit(ctx, accessOf(req), fitIdParam.parse(req.params.fitId)));
  }),
  route('post', '/api/analyses/:slug/fits/:fitId/reproduce', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await reproduceFit(ctx, accessOf(req), fitIdParam.parse(req.params.fitId)));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/reproduction', auth.may('analysis.read'), async (req, res) => {
    res.json(await getReproduction(ctx, accessOf(req), fitIdParam.parse(req.params.fitId)));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/compare/:otherId', auth.may('analysis.read'), async (req, res) => {
    res.json(await compareFits(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), otherIdParam.parse(req.params.otherId)));
  }),
  route('get', '/api/analyses/:slug/review-sets', auth.may('analysis.read'), async (req, res) => {
    res.json(await listReviewSets(ctx, accessOf(req)));
  }),
  route('post', '/api/analyses/:slug/review-sets', auth.may('fit.run'), async (req, res) => {
    res.status(202).json(await startReviewSet(ctx, accessOf(req), req.body));
  }),
  route('get', '/api/analyses/:slug/review-sets/:setId', auth.may('analysis.read'), async (req, res) => {
    res.json(await getReviewSet(ctx, accessOf(req), setIdParam.parse(req.params.setId)));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/export', auth.may('analysis.read'), async (req, res) => {
    const out = await exportFit(ctx, accessOf(req), fitIdParam.parse(req.params.fitId), req.query.format, req.query.table);
    res.type(out.type).attachment(out.filename).send(out.body);
  }),
];
