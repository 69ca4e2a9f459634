import { z } from 'zod';
import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { cancelFit, compareFits, exportFit, getFitEncoded, listFits, startFit } from '../services/fits.service';
import { freezeVersion, listVersions } from '../services/versions.service';
import { route, type ApiRoute } from './route';

const id = (what: string) => z.coerce.number({ error: `the ${what} in the address must be a number` }).int().positive();

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
    const { body, gzip, etag } = await getFitEncoded(ctx, accessOf(req), id('fit id').parse(req.params.fitId));
    if (etag) {
      res.set('ETag', etag).set('Cache-Control', 'private, no-cache').vary('Accept-Encoding');
      if (req.get('if-none-match') === etag) return void res.status(304).end();
    }
    res.type('json');
    if (gzip && /\bgzip\b/.test(req.get('accept-encoding') ?? '')) return void res.set('Content-Encoding', 'gzip').send(gzip);
    res.send(body);
  }),
  route('post', '/api/analyses/:slug/fits/:fitId/cancel', auth.may('fit.run'), async (req, res) => {
    res.json(await cancelFit(ctx, accessOf(req), id('fit id').parse(req.params.fitId)));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/compare/:otherId', auth.may('analysis.read'), async (req, res) => {
    res.json(await compareFits(ctx, accessOf(req), id('fit id').parse(req.params.fitId), id('other fit id').parse(req.params.otherId)));
  }),
  route('get', '/api/analyses/:slug/fits/:fitId/export', auth.may('analysis.read'), async (req, res) => {
    const out = await exportFit(ctx, accessOf(req), id('fit id').parse(req.params.fitId), req.query.format, req.query.table);
    res.type(out.type).attachment(out.filename).send(out.body);
  }),
];
