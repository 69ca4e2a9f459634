import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

/**
 * The client's layers, read from the import statements of every file under src/:
 *
 *   src/app         the router, providers, layouts and routes: composes features
 *   src/features/x  one feature: its endpoints (api/) and its components
 *   src/components  shared components, knowing no feature
 *   src/lib         shared code without React components, knowing no component or feature
 *
 * Imports go down this list only, a feature never imports another feature (a screen that shows
 * several is put together in src/app/routes), and nothing in src/ imports from server/.
 */

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return /\.tsx?$/.test(name) && !name.endsWith('.d.ts') ? [path] : [];
  });
}

/** Every module specifier of a file: static imports and re-exports, side-effect imports, and import(). */
function specifiers(text: string): string[] {
  const code = text.replace(/\/\*[\s\S]*?\*\//g, '').replace(/^\s*\/\/.*$/gm, '');
  const found: string[] = [];
  for (const re of [/\bfrom\s*['"]([^'"]+)['"]/g, /\bimport\s*['"]([^'"]+)['"]/g, /\bimport\s*\(\s*['"]([^'"]+)['"]\s*\)/g]) {
    for (const m of code.matchAll(re)) found.push(m[1]);
  }
  return found;
}

/** The project path an import reaches, with forward slashes, or null for a package. */
function target(file: string, spec: string): string | null {
  let abs: string;
  if (spec.startsWith('.')) abs = resolve(dirname(file), spec);
  else if (spec === '@shared' || spec.startsWith('@shared/')) abs = join(root, 'shared', spec.slice('@shared'.length));
  else return null;
  return relative(root, abs).split(sep).join('/');
}

type Import = { file: string; spec: string; to: string };

const imports: Import[] = sourceFiles(join(root, 'src')).flatMap((path) => {
  const file = relative(root, path).split(sep).join('/');
  return specifiers(readFileSync(path, 'utf8'))
    .map((spec) => ({ file, spec, to: target(path, spec) }))
    .filter((i): i is Import => i.to !== null);
});

const feature = (path: string) => /^src\/features\/([^/]+)(\/|$)/.exec(path)?.[1] ?? null;
const under = (path: string, dir: string) => path === dir || path.startsWith(`${dir}/`);

function report(list: Import[]): string[] {
  return list.map((i) => `${i.file} imports '${i.spec}' (${i.to})`);
}

describe('the client layers', () => {
  it('finds the imports it checks', () => {
    expect(specifiers("import { a } from './a';\nimport type { B } from '../b';\nexport { c } from \"./c\";\nimport './d.css';\nconst e = import('./e');")).toEqual(['./a', '../b', './c', './d.css', './e']);
    expect(imports.some((i) => i.file === 'src/app/router.tsx')).toBe(true);
    expect(imports.some((i) => i.to.startsWith('shared/'))).toBe(true);
  });

  it('src/components imports no feature and nothing of src/app', () => {
    expect(report(imports.filter((i) => under(i.file, 'src/components') && (under(i.to, 'src/features') || under(i.to, 'src/app'))))).toEqual([]);
  });

  it('a feature imports no other feature, and nothing of src/app', () => {
    expect(
      report(
        imports.filter((i) => {
          const from = feature(i.file);
          if (from === null) return false;
          const to = feature(i.to);
          return (to !== null && to !== from) || under(i.to, 'src/app');
        }),
      ),
    ).toEqual([]);
  });

  it('src/lib imports no component, feature or screen', () => {
    expect(report(imports.filter((i) => under(i.file, 'src/lib') && ['src/components', 'src/features', 'src/app'].some((d) => under(i.to, d))))).toEqual([]);
  });

  it('src/ imports nothing from server/', () => {
    expect(report(imports.filter((i) => under(i.to, 'server')))).toEqual([]);
  });
});
