import type { MemberRole } from '@shared/permissions';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { findAnalysisAccess } from '../db/analyses.repository';
import { findUserByEmail } from '../db/users.repository';
import { listVersionRows } from '../db/versions.repository';
import { requestUnblinding } from '../services/blinding.service';
import { getEntryDetail, reviewEntry, uploadVariations } from '../services/entries.service';
import { impactChecksIdle } from '../services/impact-checks.service';
import { startFit } from '../services/fits.service';
import { answerQuestion, raiseQuestion, stepQuestion } from '../services/questions.service';
import { startReviewSet } from '../services/review-sets.service';
import { freezeVersion } from '../services/versions.service';
import { startHypothesisScan } from '../services/hypothesis-scans.service';
import { getModel } from '../services/model.service';
import { putTemplate } from '../services/model-edit.service';

/**
 * The demo's story on its first start, told through the same services as a person's requests, so
 * that its fits are computed by the engine on the fit threads, and its e-mails go out as they
 * would (docs: README, "A short tour"). Every step is deterministic.
 *
 * - vireon-search (blinded): a frozen version, a fit of the control regions to their data and a
 *   pre-fit Asimov fit (full impacts, scan, limit), the review set before unblinding, an entry
 *   submitted for review and one sent back with a comment, and a pending request to unblind.
 *   Its expected scan over the 30 mass hypotheses.
 * - vireon-pilot (unblinded): a frozen version and the observed scan over its 25 masses, with
 *   the global significance of its bump near 1390 GeV from upcrossings and from toys.
 * - cascade-modes (unblinded): a frozen version and an observed fit of its two parameters of
 *   interest (μ for the direct mode, mu_assoc for the associated one) with full impacts, their scans
 *   and their 2D contour.
 * - cascade-rate (unblinded): a frozen version and an observed fit with full impacts, in which
 *   halo_norm is over-constrained; an open question on it with one answer, and a resolved one;
 *   once that fit is done, a revised continuum shape saved to its submitted entry, with what that
 *   upload does to the result (when the fits run in this process).
 * - then (also only then) the pilot run's control-region continuum template is re-derived: its
 *   accepted slope variation, made against the old template, is marked stale and goes back to review.
 */
/** The story is told once: while the demo's search has no frozen version, it has not been. */
export async function storyPending(ctx: Pick<AppContext, 'db'>) {
  const admin = await findUserByEmail(ctx.db, 'admin@lantern.example');
  if (!admin) return false;
  const found = await findAnalysisAccess(ctx.db, 'vireon-search', admin.id);
  return !!found && (await listVersionRows(ctx.db, found.analysis.id)).length === 0;
}

export async function seedStory(ctx: AppContext, baseUrl: string, options: { waitForFits: boolean }) {
  const as = async (slug: string, email: string): Promise<Access> => {
    const user = (await findUserByEmail(ctx.db, email))!;
    const found = (await findAnalysisAccess(ctx.db, slug, user.id))!;
    return { analysis: found.analysis, role: found.role as MemberRole | null, isAdmin: user.isAdmin, userId: user.id, userName: user.name };
  };
  const V = 'vireon-search';
  const C = 'cascade-rate';

  // the measurement: its observed fit first, since the questions point at it
  const ottoC = await as(C, 'otto@lantern.example');
  const cv = await freezeVersion(ctx, ottoC, { note: 'Model for the first review of the rate measurement' });
  const observed = await startFit(ctx, ottoC, { version: cv.number, label: 'Observed, full impacts', options: { dataset: 'observed', impacts: 'full', scan: true, limit: true } });

  const ottoV = await as(V, 'otto@lantern.example');
  const vv = await freezeVersion(ctx, ottoV, { note: 'Every systematic uploaded; control regions understood' });
  await startFit(ctx, ottoV, { version: vv.number, label: 'Control regions, observed', options: { dataset: 'observed', controlOnly: true, impacts: 'full', scan: true, limit: true } });
  await startFit(ctx, ottoV, { version: vv.number, label: 'Pre-fit Asimov, μ = 1', options: { dataset: 'asimov', asimovMu: 1, impacts: 'full', scan: true, limit: true } });
  await startReviewSet(ctx, ottoV, { version: vv.number, label: 'Before asking to unblind' });
  // its reach over the 30 masses, expected only while blinded
  await startHypothesisScan(ctx, ottoV, { version: vv.number, label: 'Expected reach over the masses', options: { dataset: 'expected', seed: 11 } });

  // the pilot run's search, unblinded: its observed scan and how much of its bump survives the look elsewhere
  const ottoP = await as('vireon-pilot', 'otto@lantern.example');
  const pv = await freezeVersion(ctx, ottoP, { note: 'Pilot-run model as in its note' });
  await startHypothesisScan(ctx, ottoP, { version: pv.number, label: 'Observed, with the global significance', options: { dataset: 'observed', upcrossingToys: 100, trialsToys: 300, seed: 7 } });

  // the two-mode measurement: both strengths at once, their correlation and their contour
  const ottoM = await as('cascade-modes', 'otto@lantern.example');
  const mv = await freezeVersion(ctx, ottoM, { note: 'Both production modes, each with its own strength' });
  await startFit(ctx, ottoM, {
    version: mv.number,
    label: 'Observed, both strengths with their contour',
    options: { dataset: 'observed', impacts: 'full', scan: true, limit: false, contour: ['mu', 'mu_assoc'] },
  });

  // the register's review loop: one entry submitted, one sent back with a comment
  await reviewEntry(ctx, await as(V, 'juno@lantern.example'), 'noise_model', { action: 'submit' }, baseUrl);
  await reviewEntry(
    ctx,
    await as(V, 'mira@lantern.example'),
    'cascade_shape',
    { action: 'send_back', comment: 'Please show the alternative extrapolation against the sideband data, and say why its slope differs from the nominal by more than the fit uncertainty.' },
    baseUrl,
  );

  // questions on the measurement's fit
  const miraC = await as(C, 'mira@lantern.example');
  const open = await raiseQuestion(
    ctx,
    miraC,
    { entry: 'halo_norm', fitId: observed.id, title: 'Why is halo_norm constrained to about 0.4?', body: 'Its post-fit width is well below its prior. Which region carries the information, and is a 30 % halo uncertainty still what the halo group recommends?' },
    baseUrl,
  );
  await answerQuestion(ctx, ottoC, open.id, { body: 'The control region has ten times the halo events of the signal region: the diagnosis shows it carries almost all the information. We are asking the halo group whether the 30 % prior is still current.' }, baseUrl);
  const settled = await raiseQuestion(
    ctx,
    miraC,
    { entry: 'energy_scale', fitId: observed.id, title: 'Is the energy-scale shape the same in both regions?', body: 'The variation is a tilt in both regions; please confirm it comes from one calibration.' },
    baseUrl,
  );
  await answerQuestion(ctx, await as(C, 'juno@lantern.example'), settled.id, { body: 'Yes: both come from the same calibration run, propagated to each selection.' }, baseUrl);
  await stepQuestion(ctx, miraC, settled.id, 'resolve', { note: 'Thank you: one calibration, one parameter.' }, baseUrl);

  // and the search asks to look
  await requestUnblinding(ctx, ottoV, { note: 'The control regions are understood, the review set is done, and every entry that enters the fit is accepted or under review.' }, baseUrl);

  if (options.waitForFits) {
    // the scans finish on their own thread meanwhile: their screen shows their progress until then
    await ctx.fits.idle();
    // a revised variation while its entry is under review: the entry shows what it does to the observed fit
    await reviseShape(ctx, ottoC, 'continuum_shape', 'continuum_shape_steeper_tail.csv', 0.04, baseUrl);
    await impactChecksIdle();
    // the pilot's control-region continuum re-derived from a wider sideband (after its scan, which
    // read the frozen version): the slope variation made against the old template goes stale
    const model = await getModel(ctx, ottoP);
    const cr = model.templates.find((t) => t.region === 'CR' && t.process === 'continuum')!;
    const last = Math.max(1, cr.nominal.length - 1);
    await putTemplate(ctx, ottoP, 'CR', 'continuum', { nominal: cr.nominal.map((v, i) => round(v * (1 + 0.03 * (i / last - 0.5)))), variance: cr.variance }, baseUrl);
  }
  await ctx.mailer.idle();
}

/** Saves the entry's shape effects again, each tilted by a further ±`tilt` across its bins (a steeper tail). */
async function reviseShape(ctx: AppContext, access: Access, key: string, filename: string, tilt: number, baseUrl: string) {
  const entry = await getEntryDetail(ctx, access, key);
  const rows = ['region,process,kind,bin,up,down'];
  for (const e of entry.effects) {
    if (e.kind !== 'shape' || !Array.isArray(e.up) || !Array.isArray(e.down)) continue;
    const up = e.up;
    const down = e.down;
    const last = Math.max(1, up.length - 1);
    up.forEach((u, b) => {
      const w = b / last - 0.5;
      rows.push(`${e.region},${e.process},shape,${b + 1},${round(u * (1 + tilt * w))},${round(down[b] * (1 - tilt * w))}`);
    });
  }
  const text = rows.join('\n') + '\n';
  const file = { buffer: Buffer.from(text), originalname: filename, size: Buffer.byteLength(text), mimetype: 'text/csv' } as Express.Multer.File;
  await uploadVariations(ctx, access, key, file, {}, true, baseUrl);
}

const round = (x: number) => Number(x.toPrecision(6));
