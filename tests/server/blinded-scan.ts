import { expect } from 'vitest';
import { strFromU8, unzipSync } from 'fflate';
import { and, eq, inArray } from 'drizzle-orm';
import { analyses, entries, fits, hypothesisScans, impactChecks, outbox, questions, regions, reviewSets, signalHypotheses, toyRuns } from '../../server/db/schema';
import { fitPartNames } from '../../shared/schemas/fits';
import { exportTableSchema } from '../../shared/schemas/fits';
import type { Client, TestApp } from './helpers';

/**
 * The blinded-response scan: the blinded analysis's signal regions get observed counts that no
 * other number in the product looks like (six digits starting 9182), and no response, to
 * anyone, may contain one of them. `scanForBlindedCounts` walks every GET route the app serves,
 * with every value its parameters can take in the analysis now (every entry, fit, part, export
 * table, question, toy run, signal hypothesis and scan over hypotheses), as every caller given, and reads every e-mail in the outbox.
 */
export const MARK = /(?<![\d.])9182\d\d(?!\d)/;

/** Gives each signal region of the analysis marked counts; returns the regions' keys. */
export async function markSignalCounts(t: TestApp, slug: string) {
  const db = t.database.db;
  const [a] = await db.select().from(analyses).where(eq(analyses.slug, slug));
  const signal = await db.select().from(regions).where(and(eq(regions.analysisId, a.id), eq(regions.role, 'signal')));
  expect(signal.length).toBeGreaterThan(0);
  for (const r of signal) {
    const counts = r.edges.slice(1).map((_, i) => 918200 + ((r.id * 17 + i) % 100));
    await db.update(regions).set({ observed: counts }).where(eq(regions.id, r.id));
  }
  return signal.map((r) => r.key);
}

type Values = Record<string, string[]>;

async function parameterValues(t: TestApp, slug: string): Promise<{ values: Values; fitIds: number[] }> {
  const db = t.database.db;
  const [a] = await db.select().from(analyses).where(eq(analyses.slug, slug));
  const fitRows = await db.select({ id: fits.id, state: fits.state }).from(fits).where(eq(fits.analysisId, a.id));
  const entryKeys = (await db.select({ key: entries.key }).from(entries).where(eq(entries.analysisId, a.id))).map((e) => e.key);
  const questionIds = (await db.select({ id: questions.id }).from(questions).where(eq(questions.analysisId, a.id))).map((q) => String(q.id));
  const setIds = (await db.select({ id: reviewSets.id }).from(reviewSets).where(eq(reviewSets.analysisId, a.id))).map((r) => String(r.id));
  const previewIds = (await db.select({ id: impactChecks.id }).from(impactChecks).where(and(eq(impactChecks.analysisId, a.id), eq(impactChecks.kind, 'pruning')))).map((r) => String(r.id));
  const hypothesisKeys = (await db.select({ key: signalHypotheses.key }).from(signalHypotheses).where(eq(signalHypotheses.analysisId, a.id))).map((h) => h.key);
  const scanIds = (await db.select({ id: hypothesisScans.id }).from(hypothesisScans).where(eq(hypothesisScans.analysisId, a.id))).map((r) => String(r.id));
  const toyIds = fitRows.length ? (await db.select({ id: toyRuns.id }).from(toyRuns).where(inArray(toyRuns.fitId, fitRows.map((f) => f.id)))).map((r) => String(r.id)) : [];
  return {
    values: {
      slug: [slug],
      key: entryKeys,
      fitId: fitRows.map((f) => String(f.id)),
      otherId: fitRows.slice(0, 1).map((f) => String(f.id)),
      part: [...fitPartNames],
      // a diagnosis refits: one parameter per fit is enough to see whether its per-bin data leak
      parameter: entryKeys.includes('halo_norm') ? ['halo_norm'] : entryKeys.slice(0, 1),
      questionId: questionIds,
      toyId: toyIds,
      setId: setIds,
      previewId: previewIds,
      hypothesis: hypothesisKeys,
      scanId: scanIds,
    },
    fitIds: fitRows.map((f) => f.id),
  };
}

/** Every concrete path of a route template, given the values of its parameters. */
function expand(template: string, values: Values): string[] {
  const names = [...template.matchAll(/:(\w+)/g)].map((m) => m[1]);
  let paths = [template];
  for (const name of names) {
    const options = values[name];
    if (!options) throw new Error(`the blinded-response scan has no values for ":${name}" in ${template}: add them`);
    paths = paths.flatMap((p) => options.map((v) => p.replace(`:${name}`, encodeURIComponent(v))));
  }
  return paths;
}

/** Query strings that change what a route sends. */
const VARIANTS: Record<string, string[]> = {
  '/api/analyses/:slug/fits/:fitId/export': ['?format=json', ...exportTableSchema.options.flatMap((table) => [`?format=csv&table=${table}`, `?format=latex&table=${table}`])],
  '/api/analyses/:slug/questions': ['?state=open', '?state=answered', '?state=resolved', ''],
  '/api/analyses/:slug/fits/:fitId/pack': ['?format=html', '?format=zip'],
};

/** Every file of a zip as one text (the approval pack's zip: its HTML, JSON and CSVs). */
function unzippedText(body: Buffer): string {
  return Object.entries(unzipSync(new Uint8Array(body)))
    .map(([name, bytes]) => `${name}\n${strFromU8(bytes)}`)
    .join('\n');
}

/** Routes that never carry an analysis's data. */
const SKIP = new Set(['/api/auth/csrf', '/api/invitations/:token']);

/**
 * Reads everything every caller can read and fails on any marked count; returns the number of
 * responses read. `label` names the sequence it follows in the failure message.
 */
export async function scanForBlindedCounts(t: TestApp, slug: string, callers: Record<string, Client>, label: string) {
  const { values } = await parameterValues(t, slug);
  let read = 0;
  const gets = t.routes.filter((r) => r.method === 'get' && !SKIP.has(r.path));
  for (const route of gets) {
    const paths = expand(route.path, values).flatMap((p) => (VARIANTS[route.path] ?? ['']).map((q) => p + q));
    for (const path of paths)
      for (const [who, client] of Object.entries(callers)) {
        const zip = path.endsWith('format=zip');
        const res = zip ? await client.get(path).responseType('blob') : await client.get(path);
        read += 1;
        const text = zip ? (res.status === 200 ? unzippedText(res.body as Buffer) : Buffer.from((res.body as Buffer | undefined) ?? '').toString('utf8')) : (res.text ?? JSON.stringify(res.body ?? null));
        expect(MARK.test(text), `after ${label}: GET ${path} sent a blinded signal-region count to ${who} (status ${res.status})`).toBe(false);
      }
  }
  await t.mailer.idle();
  const mails = await t.database.db.select().from(outbox);
  for (const m of mails) expect(MARK.test(`${m.subject}\n${m.body}`), `after ${label}: the e-mail "${m.subject}" to ${m.to} carries a blinded count`).toBe(false);
  return read;
}
