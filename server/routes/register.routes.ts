import type { AppContext } from '../context';
import { accessOf, type authorizer } from '../auth/authorize';
import { singleFile } from '../uploads/upload';
import { createEntry, deleteEffect, getEntryDetail, reviewEntry, updateEntry, uploadVariations } from '../services/entries.service';
import { smoothEffect } from '../services/smoothing.service';
import { uploadReplicas } from '../services/replicas.service';
import { changePruningRules, pruneEffects, pruningOverview, pruningPreview, restoreEffects, startPruningPreview } from '../services/pruning.service';
import { createGroup, deleteGroup, groupsView, moveEntry, renameGroup } from '../services/groups.service';
import { baseUrl, wantsSave } from './base-url';
import { idParam, route, type ApiRoute } from './route';

const effectIdParam = idParam('effect id');
const groupIdParam = idParam('group id');
const previewIdParam = idParam('preview id');

export const registerRoutes = (ctx: AppContext, auth: ReturnType<typeof authorizer>): ApiRoute[] => {
  const file = singleFile(ctx.config);
  const key = (req: { params: Record<string, unknown> }) => String(req.params.key);
  return [
    route('post', '/api/analyses/:slug/entries', auth.may('entry.create'), async (req, res) => {
      res.status(201).json(await createEntry(ctx, accessOf(req), req.body));
    }),
    route('get', '/api/analyses/:slug/entries/:key', auth.may('analysis.read'), async (req, res) => {
      res.json(await getEntryDetail(ctx, accessOf(req), key(req)));
    }),
    // owners edit their own entries, analysts any: the service decides from the entry
    route('patch', '/api/analyses/:slug/entries/:key', auth.may('analysis.read'), async (req, res) => {
      res.json(await updateEntry(ctx, accessOf(req), key(req), req.body, baseUrl(ctx, req)));
    }),
    route('post', '/api/analyses/:slug/entries/:key/review', auth.may('analysis.read'), async (req, res) => {
      res.json(await reviewEntry(ctx, accessOf(req), key(req), req.body, baseUrl(ctx, req)));
    }),
    route('post', '/api/analyses/:slug/entries/:key/variations', auth.may('variation.upload'), file, async (req, res) => {
      const save = wantsSave(req);
      res.status(save ? 201 : 200).json(await uploadVariations(ctx, accessOf(req), key(req), req.file, req.body?.options, save, baseUrl(ctx, req)));
    }),
    route('post', '/api/analyses/:slug/entries/:key/replicas', auth.may('variation.upload'), file, async (req, res) => {
      const save = wantsSave(req);
      res.status(save ? 201 : 200).json(await uploadReplicas(ctx, accessOf(req), key(req), req.file, req.body?.options, save, baseUrl(ctx, req)));
    }),
    route('delete', '/api/analyses/:slug/entries/:key/effects/:effectId', auth.may('analysis.read'), async (req, res) => {
      res.json(await deleteEffect(ctx, accessOf(req), key(req), effectIdParam.parse(req.params.effectId), baseUrl(ctx, req)));
    }),
    route('post', '/api/analyses/:slug/entries/:key/effects/:effectId/smooth', auth.may('variation.upload'), async (req, res) => {
      res.json(await smoothEffect(ctx, accessOf(req), key(req), effectIdParam.parse(req.params.effectId), req.body, baseUrl(ctx, req)));
    }),
    route('put', '/api/analyses/:slug/entries/:key/group', auth.may('groups.edit'), async (req, res) => {
      res.json(await moveEntry(ctx, accessOf(req), key(req), req.body));
    }),

    route('get', '/api/analyses/:slug/groups', auth.may('analysis.read'), async (req, res) => {
      res.json(await groupsView(ctx.db, accessOf(req).analysis.id));
    }),
    route('post', '/api/analyses/:slug/groups', auth.may('groups.edit'), async (req, res) => {
      res.status(201).json(await createGroup(ctx, accessOf(req), req.body));
    }),
    route('patch', '/api/analyses/:slug/groups/:groupId', auth.may('groups.edit'), async (req, res) => {
      res.json(await renameGroup(ctx, accessOf(req), groupIdParam.parse(req.params.groupId), req.body));
    }),
    route('delete', '/api/analyses/:slug/groups/:groupId', auth.may('groups.edit'), async (req, res) => {
      await deleteGroup(ctx, accessOf(req), groupIdParam.parse(req.params.groupId));
      res.status(204).end();
    }),

    route('get', '/api/analyses/:slug/pruning', auth.may('analysis.read'), async (req, res) => {
      res.json(await pruningOverview(ctx, accessOf(req)));
    }),
    route('put', '/api/analyses/:slug/pruning/rules', auth.may('model.edit'), async (req, res) => {
      res.json(await changePruningRules(ctx, accessOf(req), req.body));
    }),
    route('post', '/api/analyses/:slug/pruning/previews', auth.may('model.edit'), async (req, res) => {
      res.status(202).json(await startPruningPreview(ctx, accessOf(req), req.body));
    }),
    route('get', '/api/analyses/:slug/pruning/previews/:previewId', auth.may('analysis.read'), async (req, res) => {
      res.json(await pruningPreview(ctx, accessOf(req), previewIdParam.parse(req.params.previewId)));
    }),
    route('post', '/api/analyses/:slug/pruning', auth.may('model.edit'), async (req, res) => {
      res.json(await pruneEffects(ctx, accessOf(req), req.body));
    }),
    route('post', '/api/analyses/:slug/pruning/restore', auth.may('model.edit'), async (req, res) => {
      res.json(await restoreEffects(ctx, accessOf(req), req.body));
    }),
  ];
};
