import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

/**
 * The server's layers, read from the import statements of every file under server/ and shared/:
 *
 *   server/routes    parse a request, call a service, respond: never the database
 *   server/services  the use cases: call repositories, never build SQL, never import a route
 *   server/db        repositories (queries) and the schema
 *   server/mail      writes and sends messages: never the database (services choose recipients,
 *                    the mailer is given where to record)
 *   server/cache     caches and what keeps them true
 *   server/fit       the engine: mathematics only, no Express, database, threads or other server
 *                    code; everything else reaches it through server/fit/index.ts only
 *   server/runs      running work: fit and toy runs on this process's threads (threads/) or on
 *                    the PostgreSQL queue's worker processes (queue/)
 *   shared           contracts used by both sides: imports neither server/ nor src/
 *
 * Type-only imports are allowed across layers: they vanish when the code runs.
 */

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return /\.tsx?$/.test(name) && !name.endsWith('.d.ts') ? [path] : [];
  });
}

type Import = { file: string; spec: string; to: string | null; typeOnly: boolean };

/** Every import of a file: static imports and re-exports (type-only marked), side-effect imports, and import(). */
function importsOf(path: string): Import[] {
  const text = readFileSync(path, 'utf8')
    .replace(/\/\*[\s\S]*?\*\//g, '')
    .replace(/^\s*\/\/.*$/gm, '');
  const file = relative(root, path).split(sep).join('/');
  const found: Import[] = [];
  const add = (spec: string, typeOnly: boolean) => found.push({ file, spec, to: target(path, spec), typeOnly });
  for (const m of text.matchAll(/\b(import|export)\s+(type\s+)?([^'";]*?)\s*from\s*['"]([^'"]+)['"]/g)) add(m[4], !!m[2]);
  for (const m of text.matchAll(/\bimport\s*['"]([^'"]+)['"]/g)) add(m[1], false);
  for (const m of text.matchAll(/\bimport\s*\(\s*['"]([^'"]+)['"]\s*\)/g)) add(m[1], false);
  return found;
}

/** The project path an import reaches (no extension), or null for a package. */
function target(file: string, spec: string): string | null {
  let abs: string;
  if (spec.startsWith('.')) abs = resolve(dirname(file), spec);
  else if (spec === '@shared' || spec.startsWith('@shared/')) abs = join(root, 'shared', spec.slice('@shared'.length));
  else return null;
  return relative(root, abs).split(sep).join('/').replace(/\.(ts|tsx|js)$/, '');
}

const all: Import[] = [...sourceFiles(join(root, 'server')), ...sourceFiles(join(root, 'shared'))].flatMap(importsOf);
const under = (path: string | null, dir: string) => path !== null && (path === dir || path.startsWith(`${dir}/`));
const report = (list: Import[]) => list.map((i) => `${i.file} imports '${i.spec}'${i.typeOnly ? ' (type only)' : ''}`);
const values = all.filter((i) => !i.typeOnly);

describe('the server layers', () => {
  it('reads the imports of every server and shared file', () => {
    expect(all.length).toBeGreaterThan(300);
    expect(all.some((i) => i.file === 'server/routes/fits.routes.ts' && i.to === 'server/services/fits.service')).toBe(true);
  });

  it('keeps routes away from the database', () => {
    expect(report(values.filter((i) => under(i.file, 'server/routes') && under(i.to, 'server/db')))).toEqual([]);
  });

  it('keeps services from importing routes, building SQL or reading tables themselves', () => {
    expect(report(all.filter((i) => under(i.file, 'server/services') && under(i.to, 'server/routes')))).toEqual([]);
    expect(report(values.filter((i) => under(i.file, 'server/services') && (i.spec === 'drizzle-orm' || i.to === 'server/db/schema')))).toEqual([]);
  });

  it('keeps mail away from the database', () => {
    expect(report(values.filter((i) => under(i.file, 'server/mail') && under(i.to, 'server/db')))).toEqual([]);
  });

  it('keeps the engine free of Express, the database and the rest of the server', () => {
    const outside = values.filter(
      (i) =>
        under(i.file, 'server/fit') &&
        (['express', 'drizzle-orm', 'pg', 'pg-boss', '@electric-sql/pglite', 'piscina', 'node:worker_threads'].includes(i.spec) || (under(i.to, 'server') && !under(i.to, 'server/fit'))),
    );
    expect(report(outside)).toEqual([]);
  });

  it('lets the rest of the server reach the engine only through its index', () => {
    // type-only imports too: the engine's internal types are not a contract
    expect(report(all.filter((i) => under(i.file, 'server') && !under(i.file, 'server/fit') && under(i.to, 'server/fit') && i.to !== 'server/fit/index' && i.to !== 'server/fit'))).toEqual([]);
  });

  it('keeps shared code free of the server and the client', () => {
    expect(report(all.filter((i) => under(i.file, 'shared') && (under(i.to, 'server') || under(i.to, 'src'))))).toEqual([]);
  });

  it('has no cycle of value imports between server folders', () => {
    const folder = (p: string) => p.split('/').slice(0, 2).join('/');
    const edges = new Map<string, Set<string>>();
    for (const i of values)
      if (i.to && under(i.file, 'server') && under(i.to, 'server') && folder(i.file) !== folder(i.to) && i.file.split('/').length > 2 && i.to.split('/').length > 2) {
        if (!edges.has(folder(i.file))) edges.set(folder(i.file), new Set());
        edges.get(folder(i.file))!.add(folder(i.to));
      }
    const cycles: string[] = [];
    const reach = (from: string, to: string, seen = new Set<string>()): boolean =>
      [...(edges.get(from) ?? [])].some((n) => n === to || (!seen.has(n) && (seen.add(n), reach(n, to, seen))));
    for (const [a, outs] of edges) for (const b of outs) if (a < b && reach(b, a)) cycles.push(`${a} ⇄ ${b}`);
    expect(cycles).toEqual([]);
  });
});
