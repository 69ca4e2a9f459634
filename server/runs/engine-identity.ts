import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

/** The directories whose sources decide a fit's numbers: the engine, and the schemas and statistics it shares with the client (option defaults among them). */
export const ENGINE_SOURCES = ['server/fit', 'shared'];

export interface EngineIdentity {
  /** The package version, e.g. "0.1.0". */
  version: string;
  /** SHA-256 (hex) of the engine's sources as this process runs them. */
  hash: string;
}

/**
 * SHA-256 over the TypeScript files under `dirs` (relative to `root`), in path order, each as its
 * relative path, a NUL, its bytes and a NUL: a change to any file, a file added, removed or
 * renamed changes it; where the repository lives does not.
 */
export function sourcesHash(root: string, dirs: string[]): string {
  const files: string[] = [];
  const walk = (dir: string) => {
    for (const entry of readdirSync(path.join(root, dir), { withFileTypes: true })) {
      const rel = `${dir}/${entry.name}`;
      if (entry.isDirectory()) walk(rel);
      else if (entry.name.endsWith('.ts')) files.push(rel);
    }
  };
  dirs.forEach(walk);
  files.sort();
  const hash = createHash('sha256');
  for (const file of files) hash.update(file).update('\0').update(readFileSync(path.join(root, file))).update('\0');
  return hash.digest('hex');
}

let identity: EngineIdentity | null = null;

/**
 * The engine that computes fits in this process. The server has no compile step (it runs its
 * TypeScript sources), so the hash is made from the sources themselves, once, at the first fit:
 * it names exactly the code that ran.
 */
export function engineIdentity(): EngineIdentity {
  if (!identity) {
    const pkg = JSON.parse(readFileSync(path.join(ROOT, 'package.json'), 'utf8')) as { version: string };
    identity = { version: pkg.version, hash: sourcesHash(ROOT, ENGINE_SOURCES) };
  }
  return identity;
}

/** JSON with every object's keys in sorted order, so that equal values give equal text. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) =>
    v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.keys(v).sort().map((k) => [k, (v as Record<string, unknown>)[k]])) : v,
  );
}

/** SHA-256 (hex) of a fit's exact input: the model the engine receives and its options, as canonical JSON. */
export function inputSha256(model: unknown, options: unknown): string {
  return createHash('sha256').update(canonicalJson({ model, options })).digest('hex');
}

export interface NumberDifference {
  /** Where, e.g. "nuisance.12.postfitImpact.up". */
  path: string;
  original: unknown;
  rerun: unknown;
}

/**
 * Every place where two results differ: numbers that are not equal (0 and −0 count as equal),
 * texts, and structure (a key on one side only, arrays of different lengths). `skip` names paths
 * that may differ (wall-clock times). At most `limit` are listed; `count` counts them all.
 */
export function resultDifferences(a: unknown, b: unknown, skip: (path: string) => boolean, limit = 200): { compared: number; count: number; listed: NumberDifference[] } {
  const listed: NumberDifference[] = [];
  let count = 0;
  let compared = 0;
  const differ = (at: string, original: unknown, rerun: unknown) => {
    count++;
    if (listed.length < limit) listed.push({ path: at, original, rerun });
  };
  const walk = (x: unknown, y: unknown, at: string) => {
    if (skip(at)) return;
    if (typeof x === 'number' && typeof y === 'number') {
      compared++;
      if (x !== y && !(Number.isNaN(x) && Number.isNaN(y))) differ(at, x, y);
      return;
    }
    if (Array.isArray(x) && Array.isArray(y)) {
      if (x.length !== y.length) differ(`${at}.length`, x.length, y.length);
      for (let i = 0; i < Math.min(x.length, y.length); i++) walk(x[i], y[i], at ? `${at}.${i}` : String(i));
      return;
    }
    if (x && y && typeof x === 'object' && typeof y === 'object' && !Array.isArray(x) && !Array.isArray(y)) {
      const keys = new Set([...Object.keys(x), ...Object.keys(y)]);
      for (const k of [...keys].sort()) {
        const next = at ? `${at}.${k}` : k;
        if (!(k in x) || !(k in y)) differ(next, (x as Record<string, unknown>)[k] ?? null, (y as Record<string, unknown>)[k] ?? null);
        else walk((x as Record<string, unknown>)[k], (y as Record<string, unknown>)[k], next);
      }
      return;
    }
    if (x !== y) differ(at, x ?? null, y ?? null);
  };
  walk(a, b, '');
  return { compared, count, listed };
}
