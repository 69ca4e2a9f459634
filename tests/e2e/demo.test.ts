import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { startServer, type RunningServer } from './support';

/**
 * The demo on a fresh start, read through the API as its people would: everything the README's
 * tour shows is already there, computed by the engine when the server first started.
 */
describe('the demo on its first start', () => {
  let server: RunningServer;
  const as = async (email: string) => {
    const agent = request.agent('');
    const base = server.url;
    const token = (await agent.get(`${base}/api/auth/csrf`)).body.token as string;
    const signed = await agent.post(`${base}/api/auth/sign-in`).set('x-csrf-token', token).send({ email, password: 'lantern-demo-2026' });
    expect(signed.status).toBe(200);
    return { get: async (path: string) => (await agent.get(`${base}${path}`)).body };
  };
  beforeAll(async () => {
    server = await startServer();
  });
  afterAll(async () => server?.stop());

  it('says how long its story took, within 20 s', () => {
    const m = server.output().match(/The demo's fits, questions and e-mails were made in ([\d.]+) s\./);
    expect(m).not.toBeNull();
    expect(Number(m![1])).toBeLessThan(20);
  });

  it('holds a frozen version per analysis', async () => {
    const rafe = await as('rafe@lantern.example');
    for (const slug of ['vireon-search', 'cascade-rate', 'cascade-modes']) expect((await rafe.get(`/api/analyses/${slug}/versions`)).length).toBeGreaterThanOrEqual(1);
  });

  it('shows the blinded search with a control-only fit, a pre-fit Asimov fit (full impacts, scan, limit) and the review set', async () => {
    const rafe = await as('rafe@lantern.example');
    const fits = (await rafe.get('/api/analyses/vireon-search/fits')) as { id: number; label: string; state: string; options: Record<string, unknown> }[];
    const control = fits.find((f) => f.options.controlOnly && f.options.dataset === 'observed' && f.options.impacts === 'full')!;
    const asimov = fits.find((f) => f.options.dataset === 'asimov' && f.options.impacts === 'full' && f.options.scan && f.options.limit && f.options.expectedFrom === 'prefit')!;
    expect(control.state).toBe('succeeded');
    expect(asimov.state).toBe('succeeded');
    const head = await rafe.get(`/api/analyses/vireon-search/fits/${asimov.id}`);
    expect(head.result.summary.limit.observed).toBeGreaterThan(0);
    expect(head.result.nuisance.filter((n: { postfitImpact: unknown }) => n.postfitImpact).length).toBeGreaterThan(30);
    const [set] = await rafe.get('/api/analyses/vireon-search/review-sets');
    expect(set.state).toBe('succeeded');
    expect(set.members.map((m: { variant: string }) => m.variant)).toEqual(expect.arrayContaining(['control-only', 'expected-1', 'expected-0', 'hidden-mu', 'stat-only']));
  });

  it('shows the measurement with an observed full-impacts fit in which halo_norm is over-constrained, an answered question on it and a resolved one', async () => {
    const mira = await as('mira@lantern.example');
    const [fit] = await mira.get('/api/analyses/cascade-rate/fits');
    expect(fit).toMatchObject({ state: 'succeeded', options: { dataset: 'observed', impacts: 'full' } });
    const head = await mira.get(`/api/analyses/cascade-rate/fits/${fit.id}`);
    expect(head.result.nuisance.find((n: { name: string }) => n.name === 'halo_norm')).toMatchObject({ overConstrained: true });
    const questions = (await mira.get('/api/analyses/cascade-rate/questions')) as { entry: { key: string }; state: string; answers: number; fit: { id: number } }[];
    expect(questions.find((q) => q.entry.key === 'halo_norm')).toMatchObject({ state: 'answered', answers: 1, fit: { id: fit.id } });
    expect(questions.some((q) => q.state === 'resolved')).toBe(true);
  });

  it('shows the two-mode measurement with both strengths, their scans, their moderate anti-correlation and their contour', async () => {
    const rafe = await as('rafe@lantern.example');
    const model = await rafe.get('/api/analyses/cascade-modes/model');
    expect(model.parametersOfInterest.map((q: { key: string }) => q.key)).toEqual(['mu_assoc']);
    const [fit] = await rafe.get('/api/analyses/cascade-modes/fits');
    expect(fit).toMatchObject({ state: 'succeeded', label: 'Observed, both strengths with their contour', options: { dataset: 'observed', impacts: 'full', scan: true, limit: false, contour: ['mu', 'mu_assoc'] } });
    const { result } = await rafe.get(`/api/analyses/cascade-modes/fits/${fit.id}`);
    type Poi = { name: string; value: number; error: number; scan: { points: unknown[] } | null };
    const list = result.poi.list as Poi[];
    expect(list.map((p) => p.name)).toEqual(['mu', 'mu_assoc']);
    // drawn at 1.1 and 0.8: each within three of its errors
    expect(Math.abs(list[0].value - 1.1)).toBeLessThan(3 * list[0].error);
    expect(Math.abs(list[1].value - 0.8)).toBeLessThan(3 * list[1].error);
    expect(list[1].scan!.points.length).toBeGreaterThan(10);
    const rho = result.poi.correlation.values[1];
    expect(rho).toBeLessThan(-0.15);
    expect(rho).toBeGreaterThan(-0.7);
    expect(result.contour).toMatchObject({ parameters: ['mu', 'mu_assoc'], failure: null });
    expect(result.contour.levels.map((l: { lines: unknown[] }) => l.lines.length > 0)).toEqual([true, true]);
  });

  it('shows on an entry under review what its revised variation does to the observed fit', async () => {
    const mira = await as('mira@lantern.example');
    const [fit] = await mira.get('/api/analyses/cascade-rate/fits');
    const entry = await mira.get('/api/analyses/cascade-rate/entries/continuum_shape');
    expect(entry.state).toBe('submitted');
    expect(entry.impactCheck).toMatchObject({ state: 'done', fit: { id: fit.id }, failure: null });
    expect(entry.impactCheck.mu.before).toBeCloseTo(fit.headline.mu, 6);
    expect(entry.impactCheck.mu.after).not.toBe(entry.impactCheck.mu.before);
    expect(entry.impactCheck.focus[0]).toMatchObject({ name: 'continuum_shape' });
    // and the search's register has effects its pruning rules propose
    const pruning = await mira.get('/api/analyses/vireon-search/pruning');
    expect(pruning.candidates.length).toBeGreaterThan(0);
  });

  it('holds an entry awaiting review, one sent back with a comment, and a pending request to unblind', async () => {
    const mira = await as('mira@lantern.example');
    const nonlin = await mira.get('/api/analyses/vireon-search/entries/noise_model');
    expect(nonlin.state).toBe('submitted');
    const iso = await mira.get('/api/analyses/vireon-search/entries/cascade_shape');
    expect(iso.state).toBe('sent_back');
    expect(iso.revisions[0].summary).toMatch(/^Sent back\. Comment: Please show the alternative extrapolation/);
    expect((await mira.get('/api/analyses/vireon-search/blinding')).state).toBe('unblinding_requested');
  });

  it('has the e-mails these produced in the outbox', async () => {
    const admin = await as('admin@lantern.example');
    const subjects = ((await admin.get('/api/outbox')) as { subject: string }[]).map((m) => m.subject);
    for (const expected of [/noise_model awaits review/, /cascade_shape was sent back/, /Question on halo_norm/, /Answer on halo_norm/, /resolved/, /Unblinding requested by/])
      expect(subjects.some((s) => expected.test(s)), String(expected)).toBe(true);
  });
});
