import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { hashPassword } from '../../server/auth/passwords';
import { readFileSync } from 'node:fs';
import { analyses, effects, entries, fits, groups, hypothesisScans, impactChecks, invitations, memberships, modelVersions, processes, questions, regions, reviewSets, signalHypotheses, toyRuns, users } from '../../server/db/schema';
import { Client, createTestApp, dbSnapshot, DEMO, PASSWORD, signedIn, type TestApp } from './helpers';

/**
 * Walks every API route with every role and signed out, and checks the status the
 * permission table promises. A route added without a row here fails the first test.
 */

type Who = 'signedOut' | 'reader' | 'contact' | 'analyst' | 'convener' | 'admin' | 'outsider';
const WHO: Who[] = ['signedOut', 'reader', 'contact', 'analyst', 'convener', 'admin', 'outsider'];
const EMAIL: Record<Exclude<Who, 'signedOut'>, string> = {
  reader: DEMO.reader,
  contact: DEMO.contact,
  analyst: DEMO.analyst,
  convener: DEMO.convener,
  admin: DEMO.admin,
  outsider: DEMO.outsider,
};

type Call = { path: string; body?: unknown; file?: { name: string; content: string }; fields?: Record<string, string> };
type Row = {
  /** builds the concrete request; may create what the call needs first */
  call: (t: TestApp, who: Who, n: number) => Promise<Call> | Call;
  expect: Record<Who, number>;
  /** the call ends or replaces the session */
  resetsSession?: boolean;
};

const SLUG = 'vireon-search';
const all = (status: number): Record<Who, number> => ({ signedOut: status, reader: status, contact: status, analyst: status, convener: status, admin: status, outsider: status });
const signedInOnly = (ok: number) => ({ ...all(ok), signedOut: 401 });
const adminOnly = (ok: number) => ({ ...all(403), signedOut: 401, admin: ok });
const analystOnly = (ok: number) => ({ ...all(403), signedOut: 401, analyst: ok });
/** the entry's owner (the contact) and analysts */
const editors = (ok: number) => ({ ...all(403), signedOut: 401, analyst: ok, contact: ok });
const members = (ok: number) => ({ signedOut: 401, reader: ok, contact: ok, analyst: ok, convener: ok, admin: ok, outsider: 403 });
const managers = (ok: number) => ({ signedOut: 401, reader: 403, contact: 403, analyst: 403, convener: ok, admin: ok, outsider: 403 });

let created = 0;
async function freshUser(t: TestApp) {
  created += 1;
  const email = `person${created}@lantern.example`;
  const [u] = await t.database.db.insert(users).values({ email, name: `Person ${created}`, passwordHash: await hashPassword(PASSWORD) }).returning();
  return u;
}
async function freshMember(t: TestApp) {
  const u = await freshUser(t);
  const admin = await signedIn(t.app, DEMO.admin);
  const res = await admin.send('post', `/api/analyses/${SLUG}/members`, { email: u.email, role: 'reader' });
  expect(res.status).toBe(201);
  return u;
}

const ids = async (t: TestApp) => {
  const db = t.database.db;
  const [a] = await db.select().from(analyses).where(eq(analyses.slug, SLUG));
  const [juno] = await db.select().from(users).where(eq(users.email, DEMO.contact));
  const [otto] = await db.select().from(users).where(eq(users.email, DEMO.analyst));
  const [cr] = await db.select().from(regions).where(and(eq(regions.analysisId, a.id), eq(regions.key, 'CR-shower')));
  const [sp] = await db.select().from(processes).where(and(eq(processes.analysisId, a.id), eq(processes.key, 'showerpair')));
  return { analysisId: a.id, juno: juno.id, otto: otto.id, region: cr.id, process: sp.id };
};
/** a draft entry owned by the systematics contact, with one scale effect */
async function freshEntry(t: TestApp) {
  created += 1;
  const { analysisId, juno, region, process } = await ids(t);
  const [e] = await t.database.db.insert(entries).values({ analysisId, key: `fixture_${created}`, label: `Fixture ${created}`, ownerId: juno }).returning();
  const [effect] = await t.database.db.insert(effects).values({ entryId: e.id, regionId: region, processId: process, kind: 'scale', up: 1.1, down: 0.9 }).returning();
  return { key: e.key, effectId: effect.id };
}
async function freshGroup(t: TestApp) {
  created += 1;
  const [g] = await t.database.db.insert(groups).values({ analysisId: (await ids(t)).analysisId, name: `fixture group ${created}` }).returning();
  return g.id;
}
async function freshInvitation(t: TestApp) {
  created += 1;
  const token = `fixture-token-${created}`;
  const { analysisId, otto } = await ids(t);
  await t.database.db.insert(invitations).values({ analysisId, email: `invited${created}@lantern.example`, role: 'reader', tokenHash: createHash('sha256').update(token).digest('hex'), invitedById: otto });
  return token;
}
/** an analysis with no model yet, where the demo analyst is an analyst */
async function emptyAnalysis(t: TestApp) {
  created += 1;
  const [a] = await t.database.db.insert(analyses).values({ slug: `empty-${created}`, name: `Empty ${created}` }).returning();
  await t.database.db.insert(memberships).values({ analysisId: a.id, userId: (await ids(t)).otto, role: 'analyst' });
  return a.slug;
}
async function freshRegion(t: TestApp) {
  created += 1;
  const [r] = await t.database.db.insert(regions).values({ analysisId: (await ids(t)).analysisId, key: `R${created}`, role: 'control', observable: 'm', edges: [0, 1, 2] }).returning();
  return r.key;
}
async function freshProcess(t: TestApp) {
  created += 1;
  const [p] = await t.database.db.insert(processes).values({ analysisId: (await ids(t)).analysisId, key: `p${created}`, kind: 'background' }).returning();
  return p.key;
}
/** every member of the analysis asks and answers; an admin who is not a member only reads */
const askers = (ok: number) => ({ ...members(ok), admin: 403 });
const conveners = (ok: number) => ({ ...all(403), signedOut: 401, convener: ok });
/** everyone who works on the analysis: readers only read */
async function freshQuestion(t: TestApp, state: 'open' | 'resolved' = 'open') {
  const { analysisId } = await ids(t);
  const [e] = await t.database.db.select().from(entries).where(and(eq(entries.analysisId, analysisId), eq(entries.key, 'flare_escale')));
  const [q] = await t.database.db.insert(questions).values({ analysisId, entryId: e.id, title: 'Fixture question', body: 'Why?', state }).returning();
  return q.id;
}
async function setBlinding(t: TestApp, state: 'blinded' | 'unblinding_requested') {
  await t.database.db.update(analyses).set({ blinding: state }).where(eq(analyses.slug, SLUG));
}
const managersAndAnalysts = (ok: number) => ({ ...all(403), signedOut: 401, analyst: ok, convener: ok });
/** a frozen version and one converged fit of the analysis, made once through the API */
const converged = new WeakMap<TestApp, Promise<{ version: number; fitId: number }>>();
async function makeConvergedFit(t: TestApp) {
  const analyst = await signedIn(t.app, DEMO.analyst);
  const version = (await analyst.send('post', `/api/analyses/${SLUG}/versions`, { note: 'fixture' })).body.number;
  // observed data, control regions only: the stored result holds the signal regions' counts, which blinding must strip
  const started = await analyst.send('post', `/api/analyses/${SLUG}/fits`, { version, options: { dataset: 'observed', controlOnly: true, impacts: 'none', expected: false } });
  await t.fits.idle();
  return { version, fitId: started.body.id as number };
}
/** one per app: each test app has its own database */
const convergedFit = (t: TestApp) => {
  if (!converged.has(t)) converged.set(t, makeConvergedFit(t));
  return converged.get(t)!;
};
/** a rerun of the fit fixture (Reproduce), ended: one per app */
const reproduced = new WeakMap<TestApp, Promise<number>>();
const reproducedFit = (t: TestApp) => {
  if (!reproduced.has(t))
    reproduced.set(
      t,
      (async () => {
        const analyst = await signedIn(t.app, DEMO.analyst);
        const started = await analyst.send('post', `/api/analyses/${SLUG}/fits/${(await convergedFit(t)).fitId}/reproduce`, {});
        await t.fits.idle();
        return started.body.id as number;
      })(),
    );
  return reproduced.get(t)!;
};
/** a fit waiting in the database (not in this process's queue) */
async function queuedFit(t: TestApp) {
  const { version } = await convergedFit(t);
  const { analysisId } = await ids(t);
  const [v] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, analysisId), eq(modelVersions.number, version)));
  const [f] = await t.database.db.insert(fits).values({ analysisId, modelVersionId: v.id, options: {} }).returning();
  return f.id;
}
/** a review set of the fit fixture's version whose one member waits in the database */
async function queuedReviewSet(t: TestApp) {
  const { version } = await convergedFit(t);
  const { analysisId } = await ids(t);
  const [v] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, analysisId), eq(modelVersions.number, version)));
  const [set] = await t.database.db.insert(reviewSets).values({ analysisId, modelVersionId: v.id, blinded: true }).returning();
  await t.database.db.insert(fits).values({ analysisId, modelVersionId: v.id, options: {}, reviewSetId: set.id, variant: 'control-only' });
  return set.id;
}
/** a toy run of the fit fixture waiting in the database (not in this process's queue) */
async function queuedToys(t: TestApp) {
  const { fitId } = await convergedFit(t);
  const { analysisId } = await ids(t);
  const [r] = await t.database.db.insert(toyRuns).values({ analysisId, fitId, count: 10, hypothesis: { kind: 'best-fit' }, seed: 1 }).returning();
  return r.id;
}
/** a scan over hypotheses of the fit fixture's version waiting in the database (not in this process's queue) */
async function queuedScan(t: TestApp) {
  const { version } = await convergedFit(t);
  const { analysisId } = await ids(t);
  const [v] = await t.database.db.select().from(modelVersions).where(and(eq(modelVersions.analysisId, analysisId), eq(modelVersions.number, version)));
  const [s] = await t.database.db.insert(hypothesisScans).values({ analysisId, modelVersionId: v.id, options: { dataset: 'expected' } }).returning();
  return s.id;
}
const VARIATION_CSV = 'region,process,kind,bin,up,down\nCR-shower,showerpair,scale,,1.05,0.95\n';
/** a signal hypothesis of the demo, previewed in place of itself */
const HYPOTHESIS_CSV = readFileSync('docs/examples/hypothesis-m1250.csv', 'utf8');
const HYPOTHESIS_EFFECTS = readFileSync('docs/examples/hypothesis-m1250-effects.json', 'utf8');
/** a copy of the demo's hypothesis m1250 under a new key and value, for a removal */
async function freshHypothesis(t: TestApp) {
  created += 1;
  const { analysisId } = await ids(t);
  const [{ id: _id, createdAt: _at, ...m1250 }] = await t.database.db.select().from(signalHypotheses).where(and(eq(signalHypotheses.analysisId, analysisId), eq(signalHypotheses.key, 'm1250')));
  const [h] = await t.database.db.insert(signalHypotheses).values({ ...m1250, key: `h${created}`, value: 5000 + created }).returning();
  return h.key;
}
const A = `/api/analyses/${SLUG}`;

export const MATRIX: Record<string, Row> = {
  'GET /api/auth/csrf': { call: () => ({ path: '/api/auth/csrf' }), expect: all(200) },
  'POST /api/auth/sign-in': {
    call: (_t, who) => ({ path: '/api/auth/sign-in', body: { email: who === 'signedOut' ? DEMO.reader : EMAIL[who], password: PASSWORD } }),
    expect: all(200),
    resetsSession: true,
  },
  'POST /api/auth/sign-out': { call: () => ({ path: '/api/auth/sign-out' }), expect: all(204), resetsSession: true },
  'GET /api/auth/me': { call: () => ({ path: '/api/auth/me' }), expect: signedInOnly(200) },
  'GET /api/users': { call: () => ({ path: '/api/users' }), expect: adminOnly(200) },
  'POST /api/users': {
    call: (_t, who, n) => ({ path: '/api/users', body: { email: `new-${who}-${n}@lantern.example`, name: 'New Person', password: 'a-long-password' } }),
    expect: adminOnly(201),
  },
  'GET /api/analyses': { call: () => ({ path: '/api/analyses' }), expect: signedInOnly(200) },
  'POST /api/analyses': { call: (_t, who, n) => ({ path: '/api/analyses', body: { slug: `new-${who.toLowerCase()}-${n}`, name: 'New analysis' } }), expect: adminOnly(201) },
  'GET /api/analyses/:slug': { call: () => ({ path: `/api/analyses/${SLUG}` }), expect: members(200) },
  'GET /api/analyses/:slug/members': { call: () => ({ path: `/api/analyses/${SLUG}/members` }), expect: members(200) },
  'POST /api/analyses/:slug/members': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members`, body: { email: (await freshUser(t)).email, role: 'reader' } }),
    expect: managers(201),
  },
  'PATCH /api/analyses/:slug/members/:userId': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members/${(await freshMember(t)).id}`, body: { role: 'analyst' } }),
    expect: managers(200),
  },
  'DELETE /api/analyses/:slug/members/:userId': {
    call: async (t) => ({ path: `/api/analyses/${SLUG}/members/${(await freshMember(t)).id}` }),
    expect: managers(204),
  },
  'GET /api/analyses/:slug/model': { call: () => ({ path: `/api/analyses/${SLUG}/model` }), expect: members(200) },
  'GET /api/analyses/:slug/entries': { call: () => ({ path: `/api/analyses/${SLUG}/entries` }), expect: members(200) },
  'GET /api/outbox': { call: () => ({ path: '/api/outbox' }), expect: adminOnly(200) },

  // the model editor: analysts
  'POST /api/analyses/:slug/regions': { call: (_t, who, n) => ({ path: `${A}/regions`, body: { key: `new_${who}_${n}`, role: 'control', observable: 'm', edges: [0, 1, 2] } }), expect: analystOnly(201) },
  'PATCH /api/analyses/:slug/regions/:key': { call: () => ({ path: `${A}/regions/VR-mid`, body: { label: 'Validation region' } }), expect: analystOnly(200) },
  'DELETE /api/analyses/:slug/regions/:key': { call: async (t) => ({ path: `${A}/regions/${await freshRegion(t)}` }), expect: analystOnly(204) },
  'PUT /api/analyses/:slug/regions/:key/observed': { call: async (t) => ({ path: `${A}/regions/${await freshRegion(t)}/observed`, body: { observed: [3, 4] } }), expect: analystOnly(200) },
  'POST /api/analyses/:slug/processes': { call: (_t, who, n) => ({ path: `${A}/processes`, body: { key: `new_${who}_${n}`, kind: 'background' } }), expect: analystOnly(201) },
  'PATCH /api/analyses/:slug/processes/:key': { call: () => ({ path: `${A}/processes/halo`, body: { label: 'Beam halo' } }), expect: analystOnly(200) },
  'DELETE /api/analyses/:slug/processes/:key': { call: async (t) => ({ path: `${A}/processes/${await freshProcess(t)}` }), expect: analystOnly(204) },
  'POST /api/analyses/:slug/floating-norms': { call: (_t, who, n) => ({ path: `${A}/floating-norms`, body: { key: `k_${who}_${n}` } }), expect: analystOnly(201) },
  'DELETE /api/analyses/:slug/floating-norms/:key': {
    call: async (t, who, n) => {
      const [{ id }] = await t.database.db.select({ id: analyses.id }).from(analyses).where(eq(analyses.slug, SLUG));
      const { floatingNorms } = await import('../../server/db/schema');
      await t.database.db.insert(floatingNorms).values({ analysisId: id, key: `kdel_${who}_${n}` });
      return { path: `${A}/floating-norms/kdel_${who}_${n}` };
    },
    expect: analystOnly(204),
  },
  'PUT /api/analyses/:slug/templates/:region/:process': { call: async (t) => ({ path: `${A}/templates/${await freshRegion(t)}/halo`, body: { nominal: [1, 2] } }), expect: analystOnly(200) },
  'DELETE /api/analyses/:slug/templates/:region/:process': {
    call: async (t) => {
      const region = await freshRegion(t);
      const admin = await signedIn(t.app, DEMO.analyst);
      expect((await admin.send('put', `${A}/templates/${region}/halo`, { nominal: [1, 2] })).status).toBe(200);
      return { path: `${A}/templates/${region}/halo` };
    },
    expect: analystOnly(204),
  },
  'POST /api/analyses/:slug/model/csv': { call: () => ({ path: `${A}/model/csv?kind=observed`, file: { name: 'data.csv', content: 'region,bin,observed\nVR-mid,1,3\nVR-mid,2,3\nVR-mid,3,3\nVR-mid,4,3\nVR-mid,5,3\nVR-mid,6,3\nVR-mid,7,3\nVR-mid,8,3\n' } }), expect: analystOnly(200) },
  'GET /api/analyses/:slug/signal-hypotheses': { call: () => ({ path: `${A}/signal-hypotheses` }), expect: members(200) },
  'GET /api/analyses/:slug/signal-hypotheses/:hypothesis': { call: () => ({ path: `${A}/signal-hypotheses/m1250` }), expect: members(200) },
  'PUT /api/analyses/:slug/hypothesis-parameter': { call: () => ({ path: `${A}/hypothesis-parameter`, body: { name: 'mass', unit: 'GeV' } }), expect: analystOnly(200) },
  'POST /api/analyses/:slug/signal-hypotheses': {
    call: () => ({ path: `${A}/signal-hypotheses`, file: { name: 'm1250.csv', content: HYPOTHESIS_CSV }, fields: { key: 'm1250', label: 'm = 1250 GeV', value: '1250', effects: HYPOTHESIS_EFFECTS } }),
    expect: analystOnly(200),
  },
  'DELETE /api/analyses/:slug/signal-hypotheses/:hypothesis': { call: async (t) => ({ path: `${A}/signal-hypotheses/${await freshHypothesis(t)}` }), expect: analystOnly(204) },
  'GET /api/analyses/:slug/exchange': { call: () => ({ path: `${A}/exchange` }), expect: members(200) },
  'POST /api/analyses/:slug/exchange': {
    call: async (t, who) => ({
      path: who === 'analyst' ? `/api/analyses/${await emptyAnalysis(t)}/exchange` : `${A}/exchange`,
      file: { name: 'model.json', content: JSON.stringify({ format: 'plumbline.model', version: 1, name: 'm', regions: [{ key: 'R', role: 'control', observable: { name: 'x', unit: '' }, edges: [0, 1] }], processes: [{ key: 'p', kind: 'background' }], templates: [{ region: 'R', process: 'p', nominal: [1] }] }) },
    }),
    expect: analystOnly(201),
  },

  // the register
  'POST /api/analyses/:slug/entries': { call: (_t, who, n) => ({ path: `${A}/entries`, body: { key: `e_${who}_${n}`, label: 'New entry' } }), expect: analystOnly(201) },
  'GET /api/analyses/:slug/entries/:key': { call: () => ({ path: `${A}/entries/flare_escale` }), expect: members(200) },
  'PATCH /api/analyses/:slug/entries/:key': { call: async (t) => ({ path: `${A}/entries/${(await freshEntry(t)).key}`, body: { label: 'Changed', version: 1 } }), expect: editors(200) },
  'POST /api/analyses/:slug/entries/:key/review': { call: async (t) => ({ path: `${A}/entries/${(await freshEntry(t)).key}/review`, body: { action: 'submit' } }), expect: editors(200) },
  'POST /api/analyses/:slug/entries/:key/variations': { call: async (t) => ({ path: `${A}/entries/${(await freshEntry(t)).key}/variations`, file: { name: 'v.csv', content: VARIATION_CSV } }), expect: editors(200) },
  'DELETE /api/analyses/:slug/entries/:key/effects/:effectId': {
    call: async (t) => {
      const e = await freshEntry(t);
      return { path: `${A}/entries/${e.key}/effects/${e.effectId}` };
    },
    expect: editors(200),
  },
  'POST /api/analyses/:slug/entries/:key/replicas': {
    call: async (t) => ({
      path: `${A}/entries/${(await freshEntry(t)).key}/replicas`,
      file: { name: 'r.csv', content: ['region,process,template,bin,yield', ...[1, 2].flatMap((k) => Array.from({ length: 8 }, (_, b) => `CR-shower,continuum,alt${k},${b + 1},${100 + k}`))].join('\n') + '\n' },
    }),
    expect: editors(200),
  },
  'POST /api/analyses/:slug/entries/:key/effects/:effectId/smooth': {
    call: async (t) => {
      const region = (await ids(t)).region;
      const [e] = await t.database.db.insert(entries).values({ analysisId: (await ids(t)).analysisId, key: `smooth_${(created += 1)}`, label: 'Smoothing fixture', ownerId: (await ids(t)).juno }).returning();
      const [effect] = await t.database.db
        .insert(effects)
        .values({ entryId: e.id, regionId: region, processId: (await ids(t)).process, kind: 'shape', up: Array(8).fill(110), down: Array(8).fill(90) })
        .returning();
      return { path: `${A}/entries/${e.key}/effects/${effect.id}/smooth`, body: { method: 'median-hanning' } };
    },
    expect: editors(200),
  },
  'GET /api/analyses/:slug/pruning': { call: () => ({ path: `${A}/pruning` }), expect: members(200) },
  'PUT /api/analyses/:slug/pruning/rules': { call: () => ({ path: `${A}/pruning/rules`, body: { belowPct: 0.1, shapeP: 0.05 } }), expect: analystOnly(200) },
  'POST /api/analyses/:slug/pruning/previews': {
    call: async (t) => {
      await convergedFit(t);
      return { path: `${A}/pruning/previews`, body: { effects: [{ id: (await freshEntry(t)).effectId }] } };
    },
    expect: analystOnly(202),
  },
  'GET /api/analyses/:slug/pruning/previews/:previewId': {
    call: async (t) => {
      const [check] = await t.database.db.insert(impactChecks).values({ analysisId: (await ids(t)).analysisId, kind: 'pruning', state: 'running' }).returning();
      return { path: `${A}/pruning/previews/${check.id}` };
    },
    expect: members(200),
  },
  'POST /api/analyses/:slug/pruning': { call: async (t) => ({ path: `${A}/pruning`, body: { effects: [{ id: (await freshEntry(t)).effectId }], comment: 'matrix' } }), expect: analystOnly(200) },
  'POST /api/analyses/:slug/pruning/restore': {
    call: async (t) => {
      const { effectId } = await freshEntry(t);
      await t.database.db.update(effects).set({ pruned: true }).where(eq(effects.id, effectId));
      return { path: `${A}/pruning/restore`, body: { effects: [effectId] } };
    },
    expect: analystOnly(200),
  },
  'PUT /api/analyses/:slug/entries/:key/group': { call: async (t) => ({ path: `${A}/entries/${(await freshEntry(t)).key}/group`, body: { groupId: null } }), expect: analystOnly(200) },
  'GET /api/analyses/:slug/groups': { call: () => ({ path: `${A}/groups` }), expect: members(200) },
  'POST /api/analyses/:slug/groups': { call: (_t, who, n) => ({ path: `${A}/groups`, body: { name: `group ${who} ${n}` } }), expect: analystOnly(201) },
  'PATCH /api/analyses/:slug/groups/:groupId': { call: async (t, who) => ({ path: `${A}/groups/${await freshGroup(t)}`, body: { name: `renamed by ${who} ${created}` } }), expect: analystOnly(200) },
  'DELETE /api/analyses/:slug/groups/:groupId': { call: async (t) => ({ path: `${A}/groups/${await freshGroup(t)}` }), expect: analystOnly(204) },

  // model versions and fits
  'GET /api/analyses/:slug/versions': { call: () => ({ path: `${A}/versions` }), expect: members(200) },
  'POST /api/analyses/:slug/versions': { call: () => ({ path: `${A}/versions`, body: { note: 'matrix' } }), expect: managersAndAnalysts(201) },
  'GET /api/analyses/:slug/fits': { call: () => ({ path: `${A}/fits` }), expect: members(200) },
  'POST /api/analyses/:slug/fits': {
    call: async (t) => ({ path: `${A}/fits`, body: { version: (await convergedFit(t)).version, options: { dataset: 'asimov', impacts: 'none', expected: false } } }),
    expect: analystOnly(202),
  },
  'GET /api/analyses/:slug/fits/:fitId': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}` }), expect: members(200) },
  'GET /api/analyses/:slug/fits/:fitId/parts/:part': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/parts/correlation` }), expect: members(200) },
  'POST /api/analyses/:slug/fits/:fitId/cancel': { call: async (t) => ({ path: `${A}/fits/${await queuedFit(t)}/cancel` }), expect: analystOnly(200) },
  'GET /api/analyses/:slug/fits/:fitId/compare/:otherId': {
    call: async (t) => {
      const { fitId } = await convergedFit(t);
      return { path: `${A}/fits/${fitId}/compare/${fitId}` };
    },
    expect: members(200),
  },
  'POST /api/analyses/:slug/fits/:fitId/reproduce': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/reproduce` }), expect: analystOnly(202) },
  'GET /api/analyses/:slug/fits/:fitId/reproduction': { call: async (t) => ({ path: `${A}/fits/${await reproducedFit(t)}/reproduction` }), expect: members(200) },
  'GET /api/analyses/:slug/fits/:fitId/toys': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/toys` }), expect: members(200) },
  'POST /api/analyses/:slug/fits/:fitId/toys': {
    call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/toys`, body: { count: 10, hypothesis: { kind: 'best-fit' }, seed: 3 } }),
    expect: analystOnly(202),
  },
  'GET /api/analyses/:slug/toys/:toyId': { call: async (t) => ({ path: `${A}/toys/${await queuedToys(t)}` }), expect: members(200) },
  'POST /api/analyses/:slug/toys/:toyId/cancel': { call: async (t) => ({ path: `${A}/toys/${await queuedToys(t)}/cancel` }), expect: analystOnly(200) },
  'GET /api/analyses/:slug/hypothesis-scans': { call: () => ({ path: `${A}/hypothesis-scans` }), expect: members(200) },
  'POST /api/analyses/:slug/hypothesis-scans': {
    call: async (t) => ({ path: `${A}/hypothesis-scans`, body: { version: (await convergedFit(t)).version, options: { dataset: 'expected', limit: false } } }),
    expect: analystOnly(202),
  },
  'GET /api/analyses/:slug/hypothesis-scans/:scanId': { call: async (t) => ({ path: `${A}/hypothesis-scans/${await queuedScan(t)}` }), expect: members(200) },
  'POST /api/analyses/:slug/hypothesis-scans/:scanId/cancel': { call: async (t) => ({ path: `${A}/hypothesis-scans/${await queuedScan(t)}/cancel` }), expect: analystOnly(200) },
  'GET /api/analyses/:slug/review-sets': { call: () => ({ path: `${A}/review-sets` }), expect: members(200) },
  'POST /api/analyses/:slug/review-sets': { call: async (t) => ({ path: `${A}/review-sets`, body: { version: (await convergedFit(t)).version } }), expect: analystOnly(202) },
  'GET /api/analyses/:slug/review-sets/:setId': { call: async (t) => ({ path: `${A}/review-sets/${await queuedReviewSet(t)}` }), expect: members(200) },
  'POST /api/analyses/:slug/fits/:fitId/diagnosis/:parameter/checks': {
    call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/diagnosis/flare_escale/checks`, body: { checks: ['decorrelate'] } }),
    expect: analystOnly(202),
  },
  'GET /api/analyses/:slug/fits/:fitId/export': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/export?format=csv&table=summary` }), expect: members(200) },
  'GET /api/analyses/:slug/fits/:fitId/pack': { call: async (t, _who, n) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/pack?format=${n % 2 ? 'zip' : 'html'}` }), expect: members(200) },
  'PUT /api/analyses/:slug/plot-labels': {
    call: () => ({ path: `${A}/plot-labels`, body: { experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' } }),
    expect: conveners(200),
  },

  // the review loop: diagnosis, questions, blinding
  'GET /api/analyses/:slug/fits/:fitId/diagnosis/:parameter': { call: async (t) => ({ path: `${A}/fits/${(await convergedFit(t)).fitId}/diagnosis/flare_escale` }), expect: members(200) },
  'GET /api/analyses/:slug/questions': { call: () => ({ path: `${A}/questions?state=open` }), expect: members(200) },
  'POST /api/analyses/:slug/questions': { call: () => ({ path: `${A}/questions`, body: { entry: 'flare_escale', title: 'Matrix question', body: 'Why so narrow?' } }), expect: askers(201) },
  'GET /api/analyses/:slug/questions/:questionId': { call: async (t) => ({ path: `${A}/questions/${await freshQuestion(t)}` }), expect: members(200) },
  'POST /api/analyses/:slug/questions/:questionId/answers': { call: async (t) => ({ path: `${A}/questions/${await freshQuestion(t)}/answers`, body: { body: 'Because of the control region.' } }), expect: askers(201) },
  'POST /api/analyses/:slug/questions/:questionId/resolve': { call: async (t) => ({ path: `${A}/questions/${await freshQuestion(t)}/resolve`, body: {} }), expect: conveners(200) },
  'POST /api/analyses/:slug/questions/:questionId/reopen': { call: async (t) => ({ path: `${A}/questions/${await freshQuestion(t, 'resolved')}/reopen`, body: { note: 'Again.' } }), expect: conveners(200) },
  'GET /api/analyses/:slug/blinding/checklist': { call: () => ({ path: `${A}/blinding/checklist` }), expect: members(200) },
  'GET /api/analyses/:slug/versions/approval-checklist': { call: () => ({ path: `${A}/versions/approval-checklist` }), expect: members(200) },
  'GET /api/analyses/:slug/versions/stale-effects': { call: () => ({ path: `${A}/versions/stale-effects` }), expect: members(200) },
  'GET /api/analyses/:slug/blinding': { call: () => ({ path: `${A}/blinding` }), expect: members(200) },
  'POST /api/analyses/:slug/blinding/request': {
    call: async (t) => {
      await setBlinding(t, 'blinded');
      return { path: `${A}/blinding/request`, body: { note: 'The control regions are understood.' } };
    },
    expect: analystOnly(200),
  },
  // a decline: the analysis stays blinded for every other row
  'POST /api/analyses/:slug/blinding/decision': {
    call: async (t) => {
      await setBlinding(t, 'unblinding_requested');
      return { path: `${A}/blinding/decision`, body: { approve: false, note: 'Not before the approval meeting.' } };
    },
    expect: conveners(200),
  },
  'PUT /api/analyses/:slug/blinding/settings': {
    call: async (t) => {
      await setBlinding(t, 'blinded');
      return { path: `${A}/blinding/settings`, body: { approvals: 1 } };
    },
    expect: conveners(200),
  },

  // invitations: conveners and admins invite; the link itself is the credential
  'POST /api/analyses/:slug/invitations': { call: (_t, who, n) => ({ path: `${A}/invitations`, body: { email: `guest-${who}-${n}@lantern.example`, role: 'reader' } }), expect: managers(201) },
  'GET /api/invitations/:token': { call: async (t) => ({ path: `/api/invitations/${await freshInvitation(t)}` }), expect: all(200) },
  'POST /api/invitations/:token/accept': { call: async (t) => ({ path: `/api/invitations/${await freshInvitation(t)}/accept`, body: { name: 'Guest', password: 'a-long-password' } }), expect: all(201), resetsSession: true },
};

describe('authorisation of every API route', () => {
  let t: TestApp;
  const clients = new Map<Who, Client>();
  const clientFor = async (who: Who) => {
    if (!clients.has(who)) clients.set(who, who === 'signedOut' ? new Client(t.app) : await signedIn(t.app, EMAIL[who]));
    return clients.get(who)!;
  };

  /**
   * The blinding rule, checked on every cell: the blinded analysis's signal regions get observed
   * counts no other number in the product looks like (six digits starting 9182), and no
   * response, to anyone, may contain one of them.
   */
  const MARK = /(?<![\d.])9182\d\d(?!\d)/;
  beforeAll(async () => {
    t = await createTestApp();
    const { analysisId } = await ids(t);
    const signal = await t.database.db.select().from(regions).where(and(eq(regions.analysisId, analysisId), eq(regions.role, 'signal')));
    expect(signal.length).toBeGreaterThan(0);
    for (const r of signal) {
      const counts = (r.observed ?? []).map((_, i) => 918200 + ((r.id * 17 + i) % 100));
      expect(counts.length).toBeGreaterThan(0);
      await t.database.db.update(regions).set({ observed: counts }).where(eq(regions.id, r.id));
    }
    // the fit fixture first, while every control region has observed counts
    await convergedFit(t);
  });
  afterAll(async () => t.close());

  it('has an expected-status row for every route the app serves, and no row for a route it does not', () => {
    const served = t.routes.map((r) => `${r.method.toUpperCase()} ${r.path}`).sort();
    expect(served).toEqual(Object.keys(MATRIX).sort());
  });

  for (const [name, row] of Object.entries(MATRIX)) {
    const [method, template] = name.split(' ');
    it.each(WHO)(`${name} answers %s with the status the permission table gives`, async (who) => {
      const client = await clientFor(who);
      const { path, body, file, fields } = await row.call(t, who, WHO.indexOf(who));
      expect(path.startsWith(template.split('/:')[0])).toBe(true);
      const res =
        method === 'GET'
          ? await client.get(path)
          : file
            ? await client.upload(path, file, fields)
            : await client.send(method.toLowerCase() as 'post', path, body);
      expect({ who, status: res.status }).toEqual({ who, status: row.expect[who] });
      const text = res.text ?? JSON.stringify(res.body ?? null);
      expect(MARK.test(text), `${name} sent a blinded signal-region count to ${who}`).toBe(false);
      if (res.status === 401 || res.status === 403) {
        expect(res.headers['content-type']).toMatch(/json/);
        expect(res.body.error.message).toEqual(expect.any(String));
      }
      if (row.resetsSession) clients.delete(who);
    });
  }
});

/**
 * CSRF on every state-changing route, walked from the router like the matrix above: the caller
 * whose request would succeed sends it without a token, and then with another session's token.
 * Both are refused with 403 and write nothing.
 */
describe('every state-changing route demands the CSRF token of its own session', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
    await convergedFit(t);
  });
  afterAll(async () => t.close());

  it('covers every route that is not a GET', () => {
    const changing = t.routes.filter((r) => r.method !== 'get').map((r) => `${r.method.toUpperCase()} ${r.path}`);
    expect(changing.length).toBeGreaterThan(30);
    for (const name of changing) expect(Object.keys(MATRIX)).toContain(name);
  });

  const changing = Object.entries(MATRIX).filter(([name]) => !name.startsWith('GET '));
  for (const [name, row] of changing) {
    it(`${name} without a token, or with another session's, is refused and writes nothing`, async () => {
      const who = WHO.find((w) => row.expect[w] < 300)!;
      const client = who === 'signedOut' ? new Client(t.app) : await signedIn(t.app, EMAIL[who]);
      const { path, body, file, fields } = await row.call(t, who, 100 + WHO.indexOf(who));
      const method = name.split(' ')[0].toLowerCase() as 'post' | 'put' | 'patch' | 'delete';
      const before = await dbSnapshot(t);
      const other = await new Client(t.app).csrf();
      for (const token of [null, other]) {
        let req = client.agent[method](path);
        if (token) req = req.set('x-csrf-token', token);
        for (const [k, v] of Object.entries(fields ?? {})) req = req.field(k, v);
        const res = file ? await req.attach('file', Buffer.from(file.content), file.name) : await req.send((body ?? {}) as object);
        expect({ who, token: token ? 'another session' : 'none', status: res.status, code: res.body?.error?.code }).toEqual({ who, token: token ? 'another session' : 'none', status: 403, code: 'csrf' });
      }
      expect(await dbSnapshot(t)).toBe(before);
    });
  }
});
