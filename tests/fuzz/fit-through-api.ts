import fc from 'fast-check';
import { fitDetailSchema, fitPartNames, fitPartSchemas } from '@shared/schemas/fits';
import { diagnosisSchema } from '@shared/schemas/review';
import type { Fixture } from './targets';
import { describeIssues, hostileModel, hostileOptions } from './models';

/**
 * Hostile models through the whole product: each is imported into an analysis of its own,
 * frozen and fitted by the fit runner, and every fit response (the head and each part) is read
 * back through its schema, which admits finite numbers only. A model the import refuses must be
 * refused with a 422 and a message. Returns how the fits ended.
 */
export async function fitThroughApi(f: Fixture, runs: number, seed: number) {
  const { admin, analyst } = f.clients;
  const states: Record<string, number> = {};
  let imported = 0;
  let refused = 0;
  let n = 0;
  await fc.assert(
    fc.asyncProperty(hostileModel, hostileOptions, async (model, options) => {
      n += 1;
      const slug = `hostile-${seed}-${n}`;
      const created = await admin.send('post', '/api/analyses', { slug, name: `Hostile model ${n}`, blinded: false });
      if (created.status !== 201) throw new Error(`creating ${slug}: ${created.status} ${created.text}`);
      const member = await admin.send('post', `/api/analyses/${slug}/members`, { email: 'otto@lantern.example', role: 'analyst' });
      if (member.status !== 201) throw new Error(`adding the analyst: ${member.status} ${member.text}`);
      const upload = await analyst.upload(`/api/analyses/${slug}/exchange`, { name: 'hostile.json', content: JSON.stringify(model) });
      if (upload.status === 422 && typeof upload.body?.error?.message === 'string') return void (refused += 1);
      if (upload.status !== 201) throw new Error(`import answered ${upload.status}: ${upload.text.slice(0, 300)}`);
      imported += 1;
      const version = await analyst.send('post', `/api/analyses/${slug}/versions`, { note: 'hostile' });
      if (version.status !== 201) throw new Error(`freezing: ${version.status} ${version.text}`);
      const started = await analyst.send('post', `/api/analyses/${slug}/fits`, { version: version.body.number, options });
      if (started.status !== 202) throw new Error(`starting the fit: ${started.status} ${started.text}`);
      await f.t.fits.idle();

      const res = await analyst.get(`/api/analyses/${slug}/fits/${started.body.id}`);
      const detail = fitDetailSchema.safeParse(res.body);
      if (!detail.success) throw new Error(`the fit response breaks its schema: ${describeIssues(detail.error)}`);
      const { state, failure, result } = detail.data;
      states[state] = (states[state] ?? 0) + 1;
      if (state !== 'succeeded' && state !== 'failed') throw new Error(`the fit ended ${state}`);
      if (state === 'failed' && !(failure && failure.length > 10)) throw new Error('a failed fit without a reason');
      if (state === 'succeeded' && result?.status !== 'converged') throw new Error(`succeeded, but the result says ${result?.status}`);
      if (!result) return;
      for (const part of fitPartNames) {
        const got = await analyst.get(`/api/analyses/${slug}/fits/${started.body.id}/parts/${part}`);
        if (got.status !== 200) throw new Error(`part ${part}: ${got.status} ${got.text.slice(0, 200)}`);
        const checked = fitPartSchemas[part].safeParse(got.body);
        if (!checked.success) throw new Error(`part ${part} breaks its schema: ${describeIssues(checked.error)}`);
      }
      // the diagnosis of a parameter is a fit response too: finite numbers, or a refusal with a reason
      const nuisance = result.nuisance.find((p) => !p.fixed);
      if (state !== 'succeeded' || !nuisance) return;
      const diagnosis = await analyst.get(`/api/analyses/${slug}/fits/${started.body.id}/diagnosis/${nuisance.name}`);
      if (diagnosis.status === 409 && typeof diagnosis.body?.error?.message === 'string') return;
      if (diagnosis.status !== 200) throw new Error(`diagnosis: ${diagnosis.status} ${diagnosis.text.slice(0, 200)}`);
      const checked = diagnosisSchema.safeParse(diagnosis.body);
      if (!checked.success) throw new Error(`the diagnosis breaks its schema: ${describeIssues(checked.error)}`);
    }),
    { numRuns: runs, seed, endOnFailure: true },
  );
  return { imported, refused, states };
}
