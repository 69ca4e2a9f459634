import { desc } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outbox } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const V = '/api/analyses/vireon-search';

describe('questions from every reviewer, on anything, answered with evidence', () => {
  let t: TestApp;
  let analyst: Client;
  let reader: Client;
  let contact: Client;
  let seen = 0;
  let version = 0;
  let nominal = 0;
  let variant = 0;
  async function mail() {
    await t.mailer.idle();
    const rows = await t.database.db.select().from(outbox).orderBy(desc(outbox.id));
    const fresh = rows.filter((r) => r.id > seen);
    seen = Math.max(seen, ...rows.map((r) => r.id));
    return fresh.reverse().map((r) => ({ to: r.to, subject: r.subject }));
  }
  beforeAll(async () => {
    t = await createTestApp();
    [analyst, reader, contact] = await Promise.all([DEMO.analyst, DEMO.reader, DEMO.contact].map((e) => signedIn(t.app, e)));
    version = (await analyst.send('post', `${V}/versions`, { note: 'for questions' })).body.number;
    nominal = (await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'asimov', impacts: 'none', expected: false } })).body.id;
    variant = (await analyst.send('post', `${V}/fits`, { version, options: { dataset: 'asimov', impacts: 'none', expected: false, statOnly: true } })).body.id;
    await t.fits.idle();
    await mail();
  });
  afterAll(async () => t.close());

  it('lets a reader ask about one bin of a region; the analysts and conveners hear of it', async () => {
    const res = await reader.send('post', `${V}/questions`, { region: 'SR-core', bin: 3, title: 'Why is bin 3 so low?', body: 'The data dip below the expectation in bin 3.' });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ about: { kind: 'bin', label: 'region SR-core, bin 3', region: 'SR-core', bin: 3, version: null }, entry: null, author: { name: expect.any(String) }, state: 'open' });
    const sent = await mail();
    expect(sent.map((m) => m.to).sort()).toEqual([DEMO.analyst, DEMO.convener].sort());
    expect(sent[0].subject).toBe('[vireon-search] Question on region SR-core, bin 3: Why is bin 3 so low?');
    // it marks no parameter in the register
    const register = (await reader.get(`${V}/entries`)).body as { openQuestions: number }[];
    expect(register.every((e) => e.openQuestions === 0)).toBe(true);
  });

  it('takes questions on a region, a fit and a model version', async () => {
    const on = async (body: object) => (await contact.send('post', `${V}/questions`, { title: 'A question', body: 'Why?', ...body })).body.about;
    expect(await on({ region: 'CR-shower' })).toMatchObject({ kind: 'region', label: 'region CR-shower' });
    expect(await on({ fitId: nominal })).toMatchObject({ kind: 'fit', label: `fit #${nominal}` });
    expect(await on({ version })).toMatchObject({ kind: 'version', label: `model version ${version}`, version });
    const list = (await reader.get(`${V}/questions`)).body as { about: { kind: string } }[];
    expect(list.map((q) => q.about.kind).sort()).toEqual(['bin', 'fit', 'region', 'version']);
  });

  it('attaches evidence to an answer, shown as cards naming what they open', async () => {
    const [question] = (await reader.get(`${V}/questions`)).body.filter((q: { about: { kind: string } }) => q.about.kind === 'bin');
    const answer = await reader.send('post', `${V}/questions/${question.id}/answers`, {
      body: 'The fit with statistics only shows the same dip, and the diagnosis of lumi does not point there.',
      evidence: [
        { kind: 'fit', fitId: nominal },
        { kind: 'variant', fitId: variant },
        { kind: 'diagnosis', fitId: nominal, parameter: 'lumi' },
        { kind: 'version', version },
      ],
    });
    expect(answer.status, JSON.stringify(answer.body)).toBe(201);
    const cards = answer.body.thread[0].evidence;
    expect(cards.map((c: { label: string }) => c.label)).toEqual([`Fit #${nominal}`, `Variant Fit #${variant}`, `Diagnosis of lumi in Fit #${nominal}`, `Model version ${version}`]);
    expect(cards[0]).toMatchObject({ state: 'succeeded', detail: `Asimov dataset · model version ${version}` });
    expect(cards[1].detail).toBe(`Asimov dataset, statistics only · model version ${version}`);
    expect(cards[3]).toMatchObject({ state: null, detail: 'for questions' });
  });

  it('refuses evidence that does not exist or is not what it says, naming its place, and saves nothing', async () => {
    const [question] = (await reader.get(`${V}/questions`)).body.filter((q: { about: { kind: string } }) => q.about.kind === 'region');
    const before = await dbSnapshot(t);
    const refused = async (evidence: object[]) => (await analyst.send('post', `${V}/questions/${question.id}/answers`, { body: 'See this.', evidence })).body.error;
    expect((await refused([{ kind: 'fit', fitId: 99999 }])).issues).toEqual([{ path: ['evidence', 0, 'fitId'], message: 'there is no fit #99999 in this analysis' }]);
    expect((await refused([{ kind: 'version', version: 1 }, { kind: 'variant', fitId: nominal }])).issues).toEqual([
      { path: ['evidence', 1, 'kind'], message: `fit #${nominal} is the nominal fit, not a variant: attach it as a fit` },
    ]);
    expect((await refused([{ kind: 'diagnosis', fitId: nominal, parameter: 'no_such' }])).issues).toEqual([{ path: ['evidence', 0, 'parameter'], message: 'there is no parameter "no_such" in the register' }]);
    expect((await refused([{ kind: 'chart' }])).issues[0].path).toEqual(['evidence', 0, 'kind']);
    expect(await dbSnapshot(t)).toEqual(before);
  });
});
