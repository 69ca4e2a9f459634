import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { afterAll, describe, expect, it } from 'vitest';
import { fitResultSchema } from '@shared/schemas/fit';
import { fitModel, syntheticModel } from '../../server/fit';
import { createFitPool } from '../../server/runs/threads/pool';
import { countingModel, expectClose } from './helpers';

const run = promisify(execFile);
const dir = mkdtempSync(join(tmpdir(), 'plumbline-fit-'));

describe('serial and parallel refits', () => {
  const pool = createFitPool({ threads: 2 });
  afterAll(() => pool.destroy());

  it('give identical impacts, scan and limits on a worker pool and in this thread', async () => {
    const model = syntheticModel('small', 4);
    const options = { impacts: 'full', scan: true, limit: true } as const;
    const serial = await fitModel(model, options);
    const parallel = await fitModel(model, options, { pool });
    expect(parallel.nuisance).toEqual(serial.nuisance);
    expect(parallel.scan).toEqual(serial.scan);
    expect(parallel.summary).toEqual(serial.summary);
    expect(serial.nuisance.every((n) => n.postfitImpact !== null)).toBe(true);
  });
});

describe('command line', () => {
  it('fits an exchange file and writes a result the API schema accepts', async () => {
    const modelPath = join(dir, 'model.json');
    const outPath = join(dir, 'result.json');
    writeFileSync(modelPath, JSON.stringify(countingModel({ s: 10, b: 50, n: 0 })));
    const { stdout } = await run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, '--asimov', '1', '--impacts', 'full', '--scan', '--out', outPath], { cwd: process.cwd() });
    expect(stdout).toMatch(/converged/);
    const result = fitResultSchema.parse(JSON.parse(readFileSync(outPath, 'utf8')));
    expect(result.data.dataset).toBe('asimov');
    expectClose(result.summary!.mu.value, 1, 0, 1e-6);
    // Check 2 again, through the command line (Cowan et al. 2011).
    expectClose(result.summary!.discovery!.z, Math.sqrt(2 * (60 * Math.log(1 + 10 / 50) - 10)), 0, 1e-3);
    expect(result.scan!.points.length).toBe(21);
  });

  it('names the path of a bad field and exits with status 1', async () => {
    const modelPath = join(dir, 'bad.json');
    const bad = countingModel({ s: 10, b: 50, n: 55 }) as { templates: { nominal: number[] }[] };
    bad.templates[1].nominal = [-3];
    writeFileSync(modelPath, JSON.stringify(bad));
    const error = await run('npx', ['tsx', 'scripts/fit-cli.ts', modelPath, '--out', join(dir, 'never.json')], { cwd: process.cwd() }).catch((e) => e);
    expect(error.code).toBe(1);
    expect(error.stderr).toMatch(/templates\.1\.nominal\.0: must not be negative/);
  });
});
