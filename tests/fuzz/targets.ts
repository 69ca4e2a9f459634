import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { analyses, entries, invitations, memberships, questions, users } from '../../server/db/schema';
import { Client, createTestApp, dbSnapshot, DEMO, signedIn, type TestApp } from '../server/helpers';
import { malformedCsv, malformedJson, malformedJsonFile, type Json } from './malformed';

/**
 * What the fuzz sends, and to whom. Each target is one entry point of the API with a valid
 * request as its base; the generators in malformed.ts break that base in ways no correct
 * server may accept. Callers are chosen so that the request reaches validation (the analyst
 * for model edits, the convener for decisions), not a 403.
 */

const SLUG = 'vireon-search';
const A = `/api/analyses/${SLUG}`;

type Caller = 'admin' | 'analyst' | 'convener' | 'contact' | 'signedOut';
export type Sent = { method: 'post' | 'patch' | 'put'; path: string; caller: Caller; bytes: Buffer; contentType?: string; file?: { name: string; field?: Record<string, string> }; how: string };

export type Fixture = {
  t: TestApp;
  clients: Record<Caller, Client>;
  tokens: Record<Caller, string>;
  groupId: number;
  questionId: number;
  memberId: number;
  invitation: string;
  empty: string;
  exchange: Json;
};

/** A fresh app with the demo, and what the targets need: signed-in callers, ids, an analysis without a model. */
export async function fuzzFixture(): Promise<Fixture> {
  const t = await createTestApp({ SIGN_IN_LIMIT: 1_000_000 });
  const db = t.database.db;
  const clients = {
    admin: await signedIn(t.app, DEMO.admin),
    analyst: await signedIn(t.app, DEMO.analyst),
    convener: await signedIn(t.app, DEMO.convener),
    contact: await signedIn(t.app, DEMO.contact),
    signedOut: new Client(t.app),
  };
  const tokens = {} as Record<Caller, string>;
  for (const [k, c] of Object.entries(clients)) tokens[k as Caller] = await c.csrf();

  const [a] = await db.select().from(analyses).where(eq(analyses.slug, SLUG));
  const groupId = (await clients.analyst.get(`${A}/groups`)).body.groups[0].id as number;
  const [entry] = await db.select().from(entries).where(and(eq(entries.analysisId, a.id), eq(entries.key, 'flare_escale')));
  const [q] = await db.insert(questions).values({ analysisId: a.id, entryId: entry.id, title: 'Why so narrow?', body: 'The constraint is 0.4.' }).returning();
  const [reader] = await db.select().from(users).where(eq(users.email, DEMO.reader));
  const [otto] = await db.select().from(users).where(eq(users.email, DEMO.analyst));
  const invitation = 'fuzz-invitation-token';
  await db.insert(invitations).values({ analysisId: a.id, email: 'guest@lantern.example', role: 'reader', tokenHash: createHash('sha256').update(invitation).digest('hex'), invitedById: otto.id });
  const [empty] = await db.insert(analyses).values({ slug: 'fuzz-empty', name: 'No model yet' }).returning();
  await db.insert(memberships).values({ analysisId: empty.id, userId: otto.id, role: 'analyst' });
  const exchange = (await clients.analyst.get('/api/analyses/cascade-rate/exchange')).body as Json;
  return { t, clients, tokens, groupId, questionId: q.id, memberId: reader.id, invitation, empty: empty.slug, exchange };
}

type Body = { method: Sent['method']; path: (f: Fixture) => string; caller: Caller; body: (f: Fixture) => Json };

/** A valid body for every route that reads one; the fuzz breaks each of them. */
const BODIES: Body[] = [
  { method: 'post', path: () => '/api/auth/sign-in', caller: 'signedOut', body: () => ({ email: DEMO.reader, password: 'not-the-password' }) },
  { method: 'post', path: () => '/api/users', caller: 'admin', body: () => ({ email: 'new@lantern.example', name: 'New Person', password: 'a-long-password' }) },
  { method: 'post', path: () => '/api/analyses', caller: 'admin', body: () => ({ slug: 'new-analysis', name: 'New analysis', blinded: true }) },
  { method: 'post', path: () => `${A}/members`, caller: 'convener', body: () => ({ email: 'outsider@lantern.example', role: 'reader' }) },
  { method: 'patch', path: (f) => `${A}/members/${f.memberId}`, caller: 'convener', body: () => ({ role: 'analyst' }) },
  { method: 'post', path: () => `${A}/regions`, caller: 'analyst', body: () => ({ key: 'CR-new', role: 'control', observable: 'm', unit: 'GeV', edges: [0, 10, 20, 40] }) },
  { method: 'patch', path: () => `${A}/regions/VR-mid`, caller: 'analyst', body: () => ({ label: 'Validation', edges: [0, 1, 2, 3, 4, 5, 6, 7, 8] }) },
  { method: 'put', path: () => `${A}/regions/VR-mid/observed`, caller: 'analyst', body: () => ({ observed: [3, 4, 5, 6, 7, 8, 9, 10] }) },
  { method: 'post', path: () => `${A}/processes`, caller: 'analyst', body: () => ({ key: 'newproc', kind: 'background', label: 'New', colour: '#336699' }) },
  { method: 'patch', path: () => `${A}/processes/halo`, caller: 'analyst', body: () => ({ label: 'Beam halo', kind: 'background' }) },
  { method: 'post', path: () => `${A}/floating-norms`, caller: 'analyst', body: () => ({ key: 'k_new', start: 1, min: 0, max: 5 }) },
  { method: 'put', path: () => `${A}/templates/VR-mid/halo`, caller: 'analyst', body: () => ({ nominal: [1, 2, 3, 4, 5, 6, 7, 8], variance: [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8] }) },
  { method: 'put', path: () => `${A}/hypothesis-parameter`, caller: 'analyst', body: () => ({ name: 'mass', unit: 'GeV' }) },
  { method: 'put', path: () => `${A}/plot-labels`, caller: 'convener', body: () => ({ experiment: 'LANTERN', status: 'Internal', luminosity: '38 fb⁻¹', energy: '9 TeV' }) },
  { method: 'post', path: () => `${A}/entries`, caller: 'analyst', body: () => ({ key: 'new_entry', label: 'New entry', description: 'What it covers.' }) },
  { method: 'patch', path: () => `${A}/entries/flare_id`, caller: 'analyst', body: () => ({ label: 'Changed', version: 1 }) },
  { method: 'post', path: () => `${A}/entries/flare_id/review`, caller: 'analyst', body: () => ({ action: 'submit', note: 'Ready.' }) },
  { method: 'put', path: () => `${A}/entries/flare_id/group`, caller: 'analyst', body: (f) => ({ groupId: f.groupId }) },
  { method: 'post', path: () => `${A}/groups`, caller: 'analyst', body: () => ({ name: 'New group' }) },
  { method: 'patch', path: (f) => `${A}/groups/${f.groupId}`, caller: 'analyst', body: () => ({ name: 'Renamed group' }) },
  { method: 'post', path: () => `${A}/versions`, caller: 'analyst', body: () => ({ note: 'for the fuzz' }) },
  { method: 'post', path: () => `${A}/fits`, caller: 'analyst', body: () => ({ version: 1, label: 'fuzz', options: { dataset: 'asimov', asimovMu: 1, impacts: 'none', scanPoints: 21, excludeRegions: ['VR-mid'], overConstraintThreshold: 0.5 } }) },
  { method: 'post', path: () => `${A}/fits/1/toys`, caller: 'analyst', body: () => ({ count: 10, hypothesis: { kind: 'fixed-mu', mu: 0.5 }, seed: 12, label: 'fuzz' }) },
  { method: 'post', path: () => `${A}/questions`, caller: 'convener', body: () => ({ entry: 'flare_escale', fitId: null, title: 'Why narrow?', body: 'Show the evidence.' }) },
  { method: 'post', path: (f) => `${A}/questions/${f.questionId}/answers`, caller: 'contact', body: () => ({ body: 'The control region constrains it.' }) },
  { method: 'post', path: (f) => `${A}/questions/${f.questionId}/resolve`, caller: 'convener', body: () => ({ note: 'Understood.' }) },
  { method: 'post', path: () => `${A}/blinding/request`, caller: 'analyst', body: () => ({ note: 'The control regions are understood.' }) },
  { method: 'post', path: () => `${A}/blinding/decision`, caller: 'convener', body: () => ({ approve: true, note: 'Approved.' }) },
  { method: 'post', path: () => `${A}/invitations`, caller: 'convener', body: () => ({ email: 'guest2@lantern.example', role: 'reader' }) },
  { method: 'post', path: (f) => `/api/invitations/${f.invitation}/accept`, caller: 'signedOut', body: () => ({ name: 'Guest', password: 'a-long-password' }) },
];

const VARIATIONS_CSV = readFileSync('docs/examples/variations.csv', 'utf8');
const VARIATIONS_JSON = JSON.parse(readFileSync('docs/examples/variations.json', 'utf8')) as Json;
const TEMPLATES_CSV = readFileSync('docs/examples/templates.csv', 'utf8');
const OBSERVED_CSV = readFileSync('docs/examples/observed.csv', 'utf8');
const HYPOTHESIS_CSV = readFileSync('docs/examples/hypothesis-m1250.csv', 'utf8');
const HYPOTHESIS_EFFECTS = JSON.parse(readFileSync('docs/examples/hypothesis-m1250-effects.json', 'utf8')) as Json;
/** the demo's hypothesis m1250 uploaded in place of itself, but for the part the fuzz breaks */
const HYPOTHESIS_FIELDS = { key: 'm1250', label: 'm = 1250 GeV', value: '1250', effects: JSON.stringify(HYPOTHESIS_EFFECTS) };

/** Junk for a place in an address: no such thing exists, or it is no number, or it cannot be decoded. */
const junkSegment = fc.constantFrom('0', '-1', '1.5', 'NaN', '1e999', '99999999999999999999', '%ZZ', '%00', 'x'.repeat(3000), '..%2F..%2Fetc', '%E9t%E9', '%F0%9F%92%A5', "1'%20or%20'1'='1", '__proto__', 'constructor', '%20');

export type Target = { name: string; inputs: (f: Fixture) => fc.Arbitrary<Sent> };

const upload = (path: string, caller: Caller, name: string, field: Record<string, string> = {}) => ({ how, bytes }: { how: string; bytes: Buffer }): Sent => ({ method: 'post', path, caller, bytes, file: { name, field }, how });

export const TARGETS: Target[] = [
  {
    name: 'API bodies',
    inputs: (f) =>
      fc.constantFrom(...BODIES).chain((b) => malformedJson(b.body(f)).map(({ how, bytes, contentType }): Sent => ({ method: b.method, path: b.path(f), caller: b.caller, bytes, contentType, how }))),
  },
  {
    name: 'addresses',
    inputs: (f) =>
      fc
        .tuple(fc.constantFrom(...BODIES), junkSegment, fc.nat())
        .filter(([b]) => /\/(\d+|flare_id|VR-mid|halo|vireon-search|fuzz-invitation-token)(\/|$)/.test(b.path(f)))
        .map(([b, junk, k]): Sent => {
          const parts = b.path(f).split('/');
          const places = parts.map((p, i) => ({ p, i })).filter(({ p }) => /^(\d+|flare_id|VR-mid|halo|vireon-search|fuzz-invitation-token)$/.test(p));
          const { i } = places[k % places.length];
          const path = parts.map((p, j) => (j === i ? junk : p)).join('/');
          return { method: b.method, path, caller: b.caller, bytes: Buffer.from(JSON.stringify(b.body(f))), contentType: 'application/json', how: `"${junk.slice(0, 20)}" in place of "${parts[i]}"` };
        }),
  },
  {
    name: 'variation CSV',
    inputs: () => malformedCsv(VARIATIONS_CSV, ['bin', 'up', 'down']).map(upload(`${A}/entries/flare_id/variations?save=1`, 'analyst', 'variations.csv')),
  },
  {
    name: 'variation JSON',
    inputs: () => malformedJsonFile(VARIATIONS_JSON).map(upload(`${A}/entries/flare_id/variations?save=1`, 'analyst', 'variations.json', { options: '{"mirror":true}' })),
  },
  {
    name: 'variation options',
    inputs: () =>
      malformedJson({ mirror: true, symmetrise: false, flatToScale: false }, { strictRoot: false }).map(({ how, bytes }): Sent => ({
        method: 'post',
        path: `${A}/entries/flare_id/variations?save=1`,
        caller: 'analyst',
        bytes: Buffer.from(VARIATIONS_CSV),
        file: { name: 'variations.csv', field: { options: bytes.toString('latin1') } },
        how: `options: ${how}`,
      })),
  },
  {
    name: 'template CSV',
    inputs: () => malformedCsv(TEMPLATES_CSV, ['bin', 'nominal', 'variance'], ['variance']).map(upload(`${A}/model/csv?kind=templates&save=1`, 'analyst', 'templates.csv')),
  },
  {
    name: 'observed CSV',
    inputs: () => malformedCsv(OBSERVED_CSV, ['bin', 'observed']).map(upload(`${A}/model/csv?kind=observed&save=1`, 'analyst', 'observed.csv')),
  },
  {
    name: 'signal hypothesis CSV',
    inputs: () => malformedCsv(HYPOTHESIS_CSV, ['bin', 'nominal', 'variance'], ['variance']).map(upload(`${A}/signal-hypotheses?save=1`, 'analyst', 'm1250.csv', HYPOTHESIS_FIELDS)),
  },
  {
    name: 'signal hypothesis effects',
    inputs: () =>
      malformedJson(HYPOTHESIS_EFFECTS).map(({ how, bytes }): Sent => ({
        method: 'post',
        path: `${A}/signal-hypotheses?save=1`,
        caller: 'analyst',
        bytes: Buffer.from(HYPOTHESIS_CSV),
        file: { name: 'm1250.csv', field: { ...HYPOTHESIS_FIELDS, effects: bytes.toString('latin1') } },
        how: `effects: ${how}`,
      })),
  },
  {
    name: 'exchange file',
    inputs: (f) => malformedJsonFile(f.exchange).map(upload(`/api/analyses/${f.empty}/exchange`, 'analyst', 'model.json')),
  },
];

/** Sends one input as its caller would, with that caller's session and CSRF token. */
export function send(f: Fixture, input: Sent) {
  let req = f.clients[input.caller].agent[input.method](input.path).set('x-csrf-token', f.tokens[input.caller]);
  if (input.file) {
    for (const [k, v] of Object.entries(input.file.field ?? {})) req = req.field(k, v);
    return req.attach('file', input.bytes, input.file.name);
  }
  return req.set('content-type', input.contentType ?? 'application/json').send(input.bytes);
}

/** What an error response must never show: a stack trace, a file path, SQL or a driver message. */
export const LEAK = /\n\s+at |node_modules|\.ts:\d+|\.js:\d+|\bselect\b.+\bfrom\b|\binsert into\b|\bupdate\b.+\bset\b|relation "|violates|syntax error at|duplicate key value|PGlite|drizzle|TypeError|ReferenceError|RangeError/i;

/**
 * Checks one answer: a 4xx (not a sign-in or role refusal: the caller has the right), JSON with a
 * message a person can act on, nothing leaked. Returns a description of what is wrong, or null.
 */
export function judge(input: Sent, res: { status: number; headers: Record<string, string>; body: unknown; text: string }): string | null {
  const error = (res.body as { error?: { message?: unknown } } | null)?.error;
  if (res.status < 400 || res.status >= 500) return `answered ${res.status}: ${res.text.slice(0, 300)}`;
  if (res.status === 401 || res.status === 403) {
    // the CSRF token is right and the caller has the role, so a 401/403 means the input confused auth
    if (!(input.caller === 'signedOut' && res.status === 401)) return `answered ${res.status} (${res.text.slice(0, 200)})`;
  }
  if (!/json/.test(res.headers['content-type'] ?? '')) return `answered ${res.status} without JSON (${res.headers['content-type']})`;
  if (typeof error?.message !== 'string' || error.message.length < 10) return `answered ${res.status} without a message: ${res.text.slice(0, 200)}`;
  if (LEAK.test(res.text)) return `leaked internals: ${res.text.slice(0, 300)}`;
  return null;
}

export type Tally = { name: string; inputs: number; statuses: Record<number, number> };

/**
 * Runs `runs` inputs of one target (fast-check, seeded), asserting after each: the judge is
 * satisfied, the database is as before, and (every 25 inputs) the server still answers.
 */
export async function fuzzTarget(f: Fixture, target: Target, runs: number, seed: number): Promise<Tally> {
  const tally: Tally = { name: target.name, inputs: 0, statuses: {} };
  const before = await dbSnapshot(f.t);
  await fc.assert(
    fc.asyncProperty(target.inputs(f), async (input) => {
      const res = await send(f, input);
      tally.inputs += 1;
      tally.statuses[res.status] = (tally.statuses[res.status] ?? 0) + 1;
      const wrong = judge(input, res as never);
      if (wrong) throw new Error(`${input.method.toUpperCase()} ${input.path.slice(0, 120)} with ${input.how}: ${wrong}`);
      if ((await dbSnapshot(f.t)) !== before) throw new Error(`${input.method.toUpperCase()} ${input.path.slice(0, 120)} with ${input.how}: the database changed`);
      if (tally.inputs % 25 === 0) {
        const alive = await f.clients.analyst.get('/api/auth/me');
        if (alive.status !== 200) throw new Error(`the server stopped answering after ${input.how}: ${alive.status}`);
      }
    }),
    { numRuns: runs, seed, endOnFailure: true },
  );
  return tally;
}
