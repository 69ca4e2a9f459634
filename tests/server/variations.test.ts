import { readFileSync } from 'node:fs';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { uploads } from '../../server/db/schema';
import { createTestApp, dbSnapshot, DEMO, signedIn, type Client, type TestApp } from './helpers';

const ENTRY = '/api/analyses/vireon-search/entries/flare_id';
const HEADER = 'region,process,kind,bin,up,down';
/** CR-shower has 8 bins; these rows give a valid shape variation of its continuum template. */
const shapeRows = (f: (b: number) => [number | string, number | string] = (b) => [100 + b, 90 - b]) =>
  Array.from({ length: 8 }, (_, i) => `CR-shower,continuum,shape,${i + 1},${f(i + 1)[0]},${f(i + 1)[1]}`);
const csv = (...rows: string[]) => [HEADER, ...rows].join('\n') + '\n';

describe('uploading variations', () => {
  let t: TestApp;
  let contact: Client;
  beforeAll(async () => {
    t = await createTestApp({ UPLOAD_LIMIT_BYTES: 20_000 });
    contact = await signedIn(t.app, DEMO.contact);
  });
  afterAll(async () => t.close());

  /** Uploads as the entry's owner and checks that the refusal names what is wrong and changed nothing. */
  async function refused(file: { name: string; content: string | Buffer }, message: RegExp, status = 422, options?: object) {
    const before = await dbSnapshot(t);
    const res = await contact.upload(`${ENTRY}/variations?save=1`, file, options ? { options: JSON.stringify(options) } : {});
    expect(res.status).toBe(status);
    expect(res.body.error.message).toMatch(message);
    expect(await dbSnapshot(t)).toBe(before);
    return res;
  }

  describe('refuses the whole file, naming row and column, and saves nothing, when', () => {
    it('a shape variation has the wrong number of bins', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows().slice(0, 7)) }, /region "CR-shower" has 8 bins but the file gives 7 for process "continuum" \(missing bin 8\)/);
    });
    it('a bin lies outside the region', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows(), 'CR-shower,continuum,shape,9,1,1') }, /Row 10, column "bin": 9 is outside region "CR-shower", which has bins 1 to 8/);
    });
    it('a bin is given twice', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows(), 'CR-shower,continuum,shape,3,1,1') }, /Row 10, column "bin": bin 3 .* appears twice \(also row 4\)/);
    });
    it('the region is unknown', async () => {
      await refused({ name: 'v.csv', content: csv('SR-nowhere,vireon,scale,,1.1,0.9') }, /Row 2, column "region": no region "SR-nowhere" in this analysis/);
    });
    it('the process is unknown', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,ghosts,scale,,1.1,0.9') }, /Row 2, column "process": no process "ghosts"/);
    });
    it('the region has no template for the process', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,vireon,scale,,1.1,0.9') }, /region "CR-shower" has no template for process "vireon"/);
    });
    it('a value is not a number', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b === 4 ? ['lots', 1] : [1, 1]))) }, /Row 5, column "up": "lots" is not a finite number/);
    });
    it('a value is NaN', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b === 2 ? [1, 'NaN'] : [1, 1]))) }, /Row 3, column "down": "NaN" is not a finite number/);
    });
    it('a value is infinite', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b === 1 ? ['Infinity', 1] : [1, 1]))) }, /Row 2, column "up": "Infinity" is not a finite number/);
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b === 1 ? ['1e999', 1] : [1, 1]))) }, /Row 2, column "up": "1e999" is not a finite number/);
    });
    it('a yield is negative', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b === 6 ? [-3, 1] : [1, 1]))) }, /Row 7, column "up": -3 must not be negative/);
    });
    it('a scale ratio is not positive', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,showerpair,scale,,0,0.9') }, /Row 2, column "up": 0 must be greater than 0/);
    });
    it('a scale row names a bin', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,showerpair,scale,3,1.1,0.9') }, /Row 2, column "bin": leave the bin empty in a scale row/);
    });
    it('the same scale effect appears twice', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,showerpair,scale,,1.1,0.9', 'CR-shower,showerpair,scale,,1.2,0.8') }, /Row 3, column "region": a second scale row/);
    });
    it('down is missing and mirroring was not chosen', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,showerpair,scale,,1.1,') }, /Row 2, column "down": no down variation .* choose the option to mirror/);
    });
    it('down is given in only some rows', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows((b) => (b > 4 ? [1, ''] : [1, 1]))) }, /column "down": is given in 4 of 8 rows/);
    });
    it('a column is missing or unknown', async () => {
      await refused({ name: 'v.csv', content: 'region,process,kind,bin,up\nCR-shower,showerpair,scale,,1.1\n' }, /Row 1: missing column "down"\. Expected the header: region,process,kind,bin,up,down/);
      await refused({ name: 'v.csv', content: csv().replace(HEADER, `${HEADER},colour`) + 'CR-shower,showerpair,scale,,1.1,0.9,red\n' }, /Row 1, column "colour": unknown column/);
    });
    it('the CSV is malformed', async () => {
      await refused({ name: 'v.csv', content: `${HEADER}\nCR-shower,showerpair,scale,,"1.1,0.9\n` }, /the CSV cannot be read/);
    });
    it('the kind is neither scale nor shape', async () => {
      await refused({ name: 'v.csv', content: csv('CR-shower,showerpair,tilt,,1.1,0.9') }, /Row 2, column "kind": "tilt" is neither "scale" nor "shape"/);
    });
    it('the JSON is malformed or has the wrong form', async () => {
      await refused({ name: 'v.json', content: '{"effects": [' }, /not valid JSON/);
      await refused({ name: 'v.json', content: JSON.stringify({ effects: [{ region: 'CR-shower', process: 'continuum', kind: 'shape', up: [1, 2], down: [1, 2] }] }) }, /effects\.0\.up.*has 2 values but region "CR-shower" has 8 bins/);
      await refused({ name: 'v.json', content: JSON.stringify({ effects: [{ region: 'CR-shower', process: 'showerpair', kind: 'scale', up: 'big' }] }) }, /effects\.0\.up/);
    });
    it('the file is empty', async () => {
      await refused({ name: 'v.csv', content: '' }, /"v.csv" is empty/);
      await refused({ name: 'v.csv', content: '   \n\n' }, /"v.csv" is empty/);
      await refused({ name: 'v.csv', content: `${HEADER}\n` }, /has a header but no data rows/);
    });
    it('the file is binary', async () => {
      await refused({ name: 'v.csv', content: Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x00, 0x00, 0x08, 0x00]) }, /is not a text file/);
      await refused({ name: 'v.csv', content: Buffer.from([0x72, 0x65, 0xff, 0xfe, 0x67]) }, /is not valid UTF-8 text/);
    });
    it('the file is over the upload limit', async () => {
      await refused({ name: 'v.csv', content: csv(...shapeRows()) + '#'.repeat(25_000) }, /larger than the upload limit of 0\.0 MB|larger than the upload limit/, 413);
    });
    it('no file is sent', async () => {
      const before = await dbSnapshot(t);
      const res = await contact.send('post', `${ENTRY}/variations`, {});
      expect(res.status).toBe(400);
      expect(res.body.error.message).toMatch(/Choose a file/);
      expect(await dbSnapshot(t)).toBe(before);
    });
    it('it reports every problem at once, in file order', async () => {
      const res = await refused({ name: 'v.csv', content: csv('XX,continuum,shape,1,1,1', 'CR-shower,showerpair,scale,,abc,0.9') }, /2 problems: Row 2.*; Row 3/);
      expect(res.body.error.issues.map((i: { path: unknown[] }) => i.path)).toEqual([
        ['row', 2, 'region'],
        ['row', 3, 'up'],
      ]);
    });
  });

  it('previews without saving: the preview shows up and down over nominal per bin, and the database is unchanged', async () => {
    const before = await dbSnapshot(t);
    const res = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: csv(...shapeRows()) });
    expect(res.status).toBe(200);
    expect(res.body.saved).toBe(false);
    const [effect] = res.body.effects;
    expect(effect).toMatchObject({ region: 'CR-shower', process: 'continuum', kind: 'shape', up: [101, 102, 103, 104, 105, 106, 107, 108], replaces: false });
    expect(effect.nominal).toHaveLength(8);
    expect(effect.edges).toHaveLength(9);
    expect(await dbSnapshot(t)).toBe(before);
  });

  it('saves in one step: effects, the raw file with its SHA-256, and a revision naming the file', async () => {
    const content = readFileSync('docs/examples/variations.csv', 'utf8');
    const res = await contact.upload(`${ENTRY}/variations?save=1`, { name: 'variations.csv', content });
    expect(res.status).toBe(201);
    expect(res.body.saved).toBe(true);
    const { createHash } = await import('node:crypto');
    expect(res.body.sha256).toBe(createHash('sha256').update(content).digest('hex'));
    const [stored] = await t.database.db.select().from(uploads).where(eq(uploads.sha256, res.body.sha256));
    expect(stored.content).toBe(content);

    const entry = (await contact.get(ENTRY)).body;
    type View = { region: string; process: string; kind: string; upload: { sha256: string } | null };
    const added = entry.effects.filter((e: View) => e.upload?.sha256 === res.body.sha256);
    expect(added.map((e: View) => `${e.region}/${e.process}/${e.kind}`).sort()).toEqual(['CR-shower/continuum/shape', 'CR-shower/showerpair/scale']);
    // effects of another kind on the same template are kept
    expect(entry.effects.some((e: View) => e.region === 'CR-shower' && e.process === 'continuum' && e.kind === 'scale' && !e.upload)).toBe(true);
    expect(added[0].upload).toMatchObject({ filename: 'variations.csv', sha256: res.body.sha256 });
    expect(entry.revisions[0]).toMatchObject({ action: 'variations.uploaded', author: { name: 'Juno Feldspire' } });
    expect(entry.revisions[0].summary).toMatch(/variations\.csv.*1 shape effect, 1 scale effect/);
  });

  it('accepts the JSON form of the example, mirroring its one-sided shape variation', async () => {
    const content = readFileSync('docs/examples/variations.json', 'utf8');
    const res = await contact.upload(`${ENTRY}/variations`, { name: 'variations.json', content }, { options: JSON.stringify({ mirror: true }) });
    expect(res.status).toBe(200);
    const shape = res.body.effects.find((e: { kind: string }) => e.kind === 'shape');
    shape.down.forEach((d: number, b: number) => expect(d).toBeCloseTo(2 * shape.nominal[b] - shape.up[b], 9));
    expect(shape.transformed).toEqual(['down mirrored as 2 × nominal − up']);
    expect(shape.replaces).toBe(true);
  });

  it('mirrors a one-sided scale ratio as 1/κ, and symmetrises a two-sided one in log space', async () => {
    const mirrored = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: csv('CR-shower,showerpair,scale,,1.25,') }, { options: '{"mirror":true}' });
    expect(mirrored.body.effects[0].down).toBeCloseTo(0.8, 12);
    const sym = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: csv('CR-shower,showerpair,scale,,1.21,0.9') }, { options: '{"symmetrise":true}' });
    const k = Math.exp((Math.log(1.21) - Math.log(0.9)) / 2);
    expect(sym.body.effects[0].up).toBeCloseTo(k, 12);
    expect(sym.body.effects[0].down).toBeCloseTo(1 / k, 12);
  });

  it('symmetrises a two-sided shape variation as nominal ± half the difference', async () => {
    const res = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: csv(...shapeRows()) }, { options: '{"symmetrise":true}' });
    const e = res.body.effects[0];
    e.nominal.forEach((n: number, b: number) => {
      const half = (101 + b - (89 - b)) / 2;
      expect(e.up[b]).toBeCloseTo(n + half, 9);
      expect(e.down[b]).toBeCloseTo(Math.max(0, n - half), 9);
    });
  });

  it('stores a flat shape as a scale effect when asked, and warns about it otherwise', async () => {
    const nominal = (await contact.get(ENTRY)).body.effects.find((e: { process: string; region: string }) => e.region === 'CR-shower' && e.process === 'continuum').nominal as number[];
    const flat = csv(...nominal.map((n, b) => `CR-shower,continuum,shape,${b + 1},${n * 1.05},${n * 0.96}`));
    const warned = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: flat });
    expect(warned.body.effects[0].warnings.map((w: { code: string }) => w.code)).toEqual(['flat-shape']);
    const converted = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: flat }, { options: '{"flatToScale":true}' });
    expect(converted.body.effects[0]).toMatchObject({ kind: 'scale' });
    expect(converted.body.effects[0].up).toBeCloseTo(1.05, 9);
    expect(converted.body.effects[0].down).toBeCloseTo(0.96, 9);
  });

  it('saves warnings with the effect and counts them in the register', async () => {
    // same side in bin 1, over 100 % in bin 2, nominal 0 cannot occur here; zero effect elsewhere
    const nominal = (await contact.get(ENTRY)).body.effects.find((e: { process: string; region: string }) => e.region === 'CR-shower' && e.process === 'continuum').nominal as number[];
    const rows = nominal.map((n, b) => (b === 0 ? `CR-shower,continuum,shape,1,${n * 1.1},${n * 1.05}` : b === 1 ? `CR-shower,continuum,shape,2,${n * 2.5},${n}` : `CR-shower,continuum,shape,${b + 1},${n},${n}`));
    const res = await contact.upload(`${ENTRY}/variations?save=1`, { name: 'warn.csv', content: csv(...rows) });
    expect(res.status).toBe(201);
    const codes = res.body.effects[0].warnings.map((w: { code: string; bins?: number[] }) => [w.code, w.bins]);
    expect(codes).toEqual([
      ['same-side', [0]],
      ['over-100-percent', [1]],
    ]);
    const register = (await contact.get('/api/analyses/vireon-search/entries')).body;
    expect(register.find((e: { key: string }) => e.key === 'flare_id').warnings).toBeGreaterThanOrEqual(2);
  });

  it('refuses an upload from a systematics contact who does not own the entry', async () => {
    const before = await dbSnapshot(t);
    const other = await signedIn(t.app, DEMO.contact2);
    const res = await other.upload(`${ENTRY}/variations?save=1`, { name: 'v.csv', content: csv('CR-shower,showerpair,scale,,1.1,0.9') });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/owner or an analyst/);
    expect(await dbSnapshot(t)).toBe(before);
  });

  describe('the statistical precision of each shift', () => {
    const VHEADER = 'region,process,kind,bin,up,down,up_shift_variance,down_shift_variance';
    const withVariances = (f: (b: number) => (number | string)[]) => [VHEADER, ...Array.from({ length: 8 }, (_, i) => `CR-shower,continuum,shape,${i + 1},${f(i + 1).join(',')}`)].join('\n') + '\n';
    const nominalOf = async () => (await contact.get('/api/analyses/vireon-search/model')).body.templates.find((x: { region: string; process: string }) => x.region === 'CR-shower' && x.process === 'continuum').nominal as number[];

    it('takes per-bin shift variances, and previews each shift with its error and its χ² against zero and a flat shift', async () => {
      const nominal = await nominalOf();
      // a clear slope: +10 % in bin 1 down to −10 % in bin 8, each shift known to 1 % of the nominal
      const rel = (b: number) => 0.1 - (0.2 * (b - 1)) / 7;
      const file = withVariances((b) => [nominal[b - 1] * (1 + rel(b)), nominal[b - 1] * (1 - rel(b)), (0.01 * nominal[b - 1]) ** 2, (0.01 * nominal[b - 1]) ** 2]);
      const res = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: file });
      expect(res.status).toBe(200);
      const p = res.body.effects[0].precision;
      expect(p.up.source).toBe('given');
      p.up.errors.forEach((e: number, b: number) => expect(e).toBeCloseTo(0.01 * nominal[b], 9));
      // against zero: Σ (rel_b / 0.01)² = 10⁴ Σ rel_b², 8 dof (hand-computed from the shifts above)
      const expected = Array.from({ length: 8 }, (_, i) => (rel(i + 1) / 0.01) ** 2).reduce((a, b) => a + b, 0);
      expect(p.up.againstZero.chi2).toBeCloseTo(expected, 6);
      expect(p.up.againstFlat.p).toBeLessThan(1e-6);
      expect(res.body.effects[0].warnings.map((w: { code: string }) => w.code)).not.toContain('within-noise');
    });

    it('flags a shape that is not significant over its noise as a candidate for smoothing or a scale effect', async () => {
      const nominal = await nominalOf();
      // ±0.5 % wiggles on a 3 % scale shift, each shift known to 2 %: the shape is noise
      const res = await contact.upload(`${ENTRY}/variations`, {
        name: 'v.csv',
        content: withVariances((b) => [nominal[b - 1] * (1.03 + (b % 2 ? 0.005 : -0.005)), nominal[b - 1] * (0.97 - (b % 2 ? 0.005 : -0.005)), (0.02 * nominal[b - 1]) ** 2, (0.02 * nominal[b - 1]) ** 2]),
      });
      expect(res.status).toBe(200);
      const warning = res.body.effects[0].warnings.find((w: { code: string }) => w.code === 'within-noise');
      expect(warning.message).toMatch(/not significant over its statistical noise against a flat shift .*: smooth it, or enter it as a scale effect/);
      expect(res.body.effects[0].precision.up.againstFlat.relativeShift).toBeCloseTo(0.03, 3);
    });

    it('estimates the errors from the template variance when the file gives none, and says so', async () => {
      const res = await contact.upload(`${ENTRY}/variations`, { name: 'v.csv', content: csv(...shapeRows()) });
      expect(res.status).toBe(200);
      expect(res.body.effects[0].precision.up.source).toBe('estimated');
    });

    it('keeps the variances with a saved effect and shows them on the entry', async () => {
      const nominal = await nominalOf();
      const save = await contact.upload(`${ENTRY}/variations?save=1`, { name: 'v.csv', content: withVariances((b) => [nominal[b - 1] * 1.1, nominal[b - 1] * 0.9, 4, 9]) });
      expect(save.status).toBe(201);
      const entry = (await contact.get(ENTRY)).body;
      const shape = entry.effects.find((e: { kind: string; region: string }) => e.kind === 'shape' && e.region === 'CR-shower');
      expect(shape.precision.up.errors).toEqual(Array(8).fill(2));
      expect(shape.precision.down.errors).toEqual(Array(8).fill(3));
    });

    it('refuses a negative variance, a variance in some rows only, and one on a scale row, naming row and column', async () => {
      await refused({ name: 'v.csv', content: withVariances((b) => [100, 90, b === 3 ? -1 : 1, 1]) }, /Row 4, column "up_shift_variance": .*-1/);
      await refused({ name: 'v.csv', content: withVariances((b) => [100, 90, b === 3 ? '' : 1, 1]) }, /column "up_shift_variance": is given in 7 of 8 rows/);
      await refused({ name: 'v.csv', content: [VHEADER, 'CR-shower,showerpair,scale,,1.1,0.9,0.01,'].join('\n') + '\n' }, /Row 2, column "up_shift_variance": leave it empty in a scale row/);
    });

    it('reads the variances from the JSON form too, and refuses ones of the wrong length', async () => {
      const nominal = await nominalOf();
      const effect = { region: 'CR-shower', process: 'continuum', kind: 'shape', up: nominal.map((n) => n * 1.1), down: nominal.map((n) => n * 0.9), up_shift_variance: Array(8).fill(1), down_shift_variance: Array(8).fill(1) };
      const ok = await contact.upload(`${ENTRY}/variations`, { name: 'v.json', content: JSON.stringify({ effects: [effect] }) });
      expect(ok.status).toBe(200);
      expect(ok.body.effects[0].precision.down.errors).toEqual(Array(8).fill(1));
      await refused({ name: 'v.json', content: JSON.stringify({ effects: [{ ...effect, down_shift_variance: [1, 2] }] }) }, /effects\.0\.down_shift_variance.*has 2 values but region "CR-shower" has 8 bins/);
    });
  });
});
