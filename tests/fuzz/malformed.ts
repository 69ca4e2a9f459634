import fc from 'fast-check';

/**
 * Generators of malformed input, each built so that no correct server may accept what it makes:
 * a value of the wrong JSON type, a number JSON cannot hold, an unknown field, a truncated text,
 * bytes that are not UTF-8. Every generator yields the raw bytes to send, not a parsed value, so
 * that what the server receives is exactly what a broken client or a damaged file would send.
 */

export type Json = null | boolean | number | string | Json[] | { [k: string]: Json };
type Path = (string | number)[];

/** Every path to a leaf or a branch inside a JSON value (the root excluded). */
export function pathsOf(value: Json, base: Path = []): { path: Path; value: Json }[] {
  const out: { path: Path; value: Json }[] = [];
  if (Array.isArray(value)) value.forEach((v, i) => out.push({ path: [...base, i], value: v }, ...pathsOf(v, [...base, i])));
  else if (value && typeof value === 'object') for (const [k, v] of Object.entries(value)) out.push({ path: [...base, k], value: v }, ...pathsOf(v, [...base, k]));
  return out;
}

const kindOf = (v: Json) => (v === null ? 'null' : Array.isArray(v) ? 'array' : typeof v);

/** A marker replaced in the serialised text, for values JSON.stringify cannot write (1e999, raw bytes). */
const RAW = '\u0000raw\u0000';

function setAt(value: Json, path: Path, replacement: Json): Json {
  if (!path.length) return replacement;
  const [head, ...rest] = path;
  if (Array.isArray(value)) return value.map((v, i) => (i === head ? setAt(v, rest, replacement) : v));
  const obj = value as Record<string, Json>;
  return { ...obj, [head]: setAt(obj[head as string], rest, replacement) };
}

const deepNest = (depth: number, inner: string) => '['.repeat(depth) + inner + ']'.repeat(depth);

/** Values of a JSON type other than `kind`, never null (some fields rightly accept null). */
function wrongTypeFor(kind: string): fc.Arbitrary<string> {
  const options: Record<string, fc.Arbitrary<string>> = {
    number: fc.oneof(fc.double({ noNaN: true, noDefaultInfinity: true }).map(String), fc.constantFrom('1e308', '-1e308', '9007199254740993', '0')),
    string: fc.oneof(fc.string({ maxLength: 30 }), fc.constantFrom('NaN', 'Infinity', '-Infinity', 'nan', '1e999', '', ' ', '\u202e', '𝜇')).map((s) => JSON.stringify(s)),
    boolean: fc.constantFrom('true', 'false'),
    array: fc.constantFrom('[]', '[1,2,3]', '["a"]', '[null]'),
    object: fc.constantFrom('{}', '{"a":1}', '{"__proto__":{"isAdmin":true}}', '{"constructor":{"prototype":{}}}'),
    deep: fc.integer({ min: 200, max: 5000 }).map((d) => deepNest(d, '0')),
  };
  // where null is right, a number may be too (an optional id): only text, lists and objects then
  const keys = Object.keys(options).filter((k) => k !== kind && !(kind === 'null' && k === 'number'));
  return fc.oneof(...keys.map((k) => options[k]));
}

/** Numbers no JSON number field may take: beyond the double range, or spelled as text. */
const nonFinite = fc.constantFrom('1e999', '-1e999', '1e400', '"NaN"', '"Infinity"', '"-Infinity"', '"1e999"', '"12 events"');

export type BodyMutation = { how: string; bytes: Buffer; contentType: string };

/**
 * Malformed versions of a valid JSON body. `mutable` says which paths may be changed (all by
 * default); a path whose value is an object is only replaced by a non-object, and so on.
 */
export function malformedJson(base: Json, options: { strictRoot?: boolean } = {}): fc.Arbitrary<BodyMutation> {
  const paths = pathsOf(base);
  const text = JSON.stringify(base);
  const json = (how: string, s: string): BodyMutation => ({ how, bytes: Buffer.from(s, 'utf8'), contentType: 'application/json' });
  /** the base with the value at `path` written as raw JSON text (which may be no JSON value at all) */
  const withRaw = (path: Path, raw: string) => JSON.stringify(setAt(base, path, RAW)).replace(JSON.stringify(RAW), raw);
  const wrongType = paths.length
    ? fc.constantFrom(...paths).chain(({ path, value }) => wrongTypeFor(kindOf(value)).map((replacement) => json(`wrong type at ${path.join('.')}`, withRaw(path, replacement))))
    : null;
  const numberPaths = paths.filter((p) => typeof p.value === 'number');
  const badNumber = numberPaths.length
    ? fc.tuple(fc.constantFrom(...numberPaths), nonFinite).map(([{ path }, n]) => json(`non-finite number at ${path.join('.')}`, withRaw(path, n)))
    : null;
  const objects = [{ path: [] as Path, value: base }, ...paths].filter((p) => kindOf(p.value) === 'object');
  const unknownField = fc
    .tuple(fc.constantFrom(...objects), fc.constantFrom('zz', 'extra', 'isAdmin', 'owner_id', '$where', '__proto__', 'id'), fc.constantFrom('1', 'true', '"x"', 'null'))
    .map(([{ path, value }, key, v]) => {
      const withKey = setAt(base, path, { ...(value as object), [RAW]: 0 });
      return json(`unknown field "${key}" at ${path.join('.') || 'top level'}`, JSON.stringify(withKey).replace(`${JSON.stringify(RAW)}:0`, `${JSON.stringify(key)}:${v}`));
    });
  const truncated = fc.integer({ min: 1, max: Math.max(1, text.length - 1) }).map((n) => json(`truncated after ${n} of ${text.length} characters`, text.slice(0, n)));
  const wrongRoot = fc.constantFrom('[]', '[{}]', '"text"', '42', 'null', 'true', deepNest(3000, '{}'), deepNest(100_000, '')).map((s) => json(`top level ${s.slice(0, 12)}`, s));
  const notJson = fc.constantFrom("{'single': 'quotes'}", '{a: 1}', '{"a":1,}', '{"a":NaN}', '{"a":Infinity}', '{"a":undefined}', '<xml/>', '{"a":1}{"b":2}', '{"a":0x10}', '{"a":01}').map((s) => json('not JSON', s));
  // not UTF-8: Latin-1 bytes inside a string, a lone continuation byte, UTF-16 without a charset
  const notUtf8 = fc.constantFrom('latin1', 'continuation', 'utf16').map((kind): BodyMutation => {
    if (kind === 'utf16') return { how: 'UTF-16 bytes sent as UTF-8', bytes: Buffer.from('\ufeff' + text, 'utf16le'), contentType: 'application/json' };
    const at = text.indexOf('"', 1) > 0 ? text.indexOf('"', 1) : 1;
    const bytes = Buffer.concat([Buffer.from(text.slice(0, at), 'utf8'), Buffer.from(kind === 'latin1' ? [0x63, 0x61, 0x66, 0xe9] : [0x80, 0xbf]), Buffer.from(text.slice(at), 'utf8')]);
    return { how: `${kind} bytes inside the JSON`, bytes, contentType: 'application/json' };
  });
  const rootArbitraries = options.strictRoot === false ? [] : [wrongRoot];
  return fc.oneof(...[wrongType, badNumber, unknownField, truncated, notJson, notUtf8, ...rootArbitraries].filter((a): a is fc.Arbitrary<BodyMutation> => a !== null));
}

/** Tokens no numeric CSV cell may hold: text, NaN, beyond the double range, negative. */
export const badNumberCell = fc.constantFrom('1e300', 'NaN', 'nan', 'Infinity', '-Infinity', 'inf', '1e999', '-1e400', 'abc', '0x1F', '1.2.3', '--1', '-3', '½', '１２', '∞', '1 000', '+-2', 'e5', 'null');

export type FileMutation = { how: string; bytes: Buffer };

const textFile = (how: string, s: string): FileMutation => ({ how, bytes: Buffer.from(s, 'utf8') });

/**
 * Malformed versions of a valid CSV file. `numeric` names the columns that hold numbers; a data
 * row's numeric cell is only replaced by a token no column accepts, a truncated file ends inside
 * a row before its last column, and only columns not named `optional` go missing.
 */
export function malformedCsv(base: string, numeric: string[], optional: string[] = []): fc.Arbitrary<FileMutation> {
  const lines = base.trimEnd().split('\n');
  const header = lines[0].split(',');
  const rows = lines.slice(1).map((l) => l.split(','));
  const cells = rows.flatMap((r, i) => header.map((h, c) => ({ row: i, col: c, h })).filter(({ col, h }) => numeric.includes(h) && r[col] !== ''));
  const rebuild = (rs: string[][], h = header) => [h.join(','), ...rs.map((r) => r.join(','))].join('\n') + '\n';

  const badCell = fc.tuple(fc.constantFrom(...cells), badNumberCell).map(([{ row, col, h }, token]) =>
    textFile(`"${token}" in column ${h}, row ${row + 2}`, rebuild(rows.map((r, i) => (i === row ? r.map((v, c) => (c === col ? token : v)) : r)))),
  );
  const missingColumn = fc.constantFrom(...header.map((_, c) => c).filter((c) => !optional.includes(header[c]))).map((c) =>
    textFile(`column ${header[c]} missing`, rebuild(rows.map((r) => r.filter((_, i) => i !== c)), header.filter((_, i) => i !== c))),
  );
  const renamedColumn = fc.tuple(fc.constantFrom(...header.map((_, c) => c)), fc.constantFrom('value', 'yield', 'Bin#', 'x', ' ', 'region2')).map(([c, name]) =>
    textFile(`column ${header[c]} renamed "${name}"`, rebuild(rows, header.map((h, i) => (i === c ? name : h)))),
  );
  // cut inside row r, before its last column: the file ends mid-row
  const truncated = fc.tuple(fc.integer({ min: 0, max: rows.length - 1 }), fc.nat()).map(([r, k]) => {
    const keep = rows[r].slice(0, header.length - 1).join(',');
    const cut = keep.slice(0, 1 + (k % keep.length));
    return textFile(`truncated in row ${r + 2} after ${cut.length} characters`, [lines[0], ...lines.slice(1, r + 1), cut].join('\n'));
  });
  const duplicateRow = fc.integer({ min: 0, max: rows.length - 1 }).map((r) => textFile(`row ${r + 2} given twice`, rebuild([...rows.slice(0, r + 1), rows[r], ...rows.slice(r + 1)])));
  const unbalancedQuote = fc.tuple(fc.integer({ min: 0, max: rows.length - 1 }), fc.integer({ min: 0, max: header.length - 1 })).map(([r, c]) =>
    textFile(`an unmatched quote in row ${r + 2}`, rebuild(rows.map((row, i) => (i === r ? row.map((v, j) => (j === c ? `"${v}` : v)) : row)))),
  );
  const extraCell = fc.tuple(fc.integer({ min: 0, max: rows.length - 1 }), fc.constantFrom('', '1', 'x')).map(([r, v]) =>
    textFile(`row ${r + 2} with a cell more than the header`, rebuild(rows.map((row, i) => (i === r ? [...row, v] : row)))),
  );
  return fc.oneof(badCell, badCell, missingColumn, renamedColumn, truncated, duplicateRow, unbalancedQuote, extraCell, brokenBytes(base));
}

/** Files that are not UTF-8 text at all, or nothing. */
export function brokenBytes(base: string): fc.Arbitrary<FileMutation> {
  return fc.oneof(
    fc.constant({ how: 'UTF-16 with a byte-order mark', bytes: Buffer.from('\ufeff' + base, 'utf16le') }),
    fc.constant({ how: 'UTF-16 without a byte-order mark', bytes: Buffer.from(base, 'utf16le') }),
    fc.constant({ how: 'Latin-1 text with an accented name', bytes: Buffer.from(base.replace(/[A-Za-z]/, 'é'), 'latin1') }),
    fc.uint8Array({ minLength: 1, maxLength: 2048 }).map((a) => ({ how: `${a.length} random bytes`, bytes: Buffer.concat([Buffer.from([0xff, 0xfe, 0x00]), Buffer.from(a)]) })),
    fc.constantFrom('', ' ', '\n\n', '\ufeff').map((s) => textFile(`only ${JSON.stringify(s)}`, s)),
    fc.integer({ min: 1, max: 4 }).map((n) => ({ how: 'gzip-compressed', bytes: Buffer.from([0x1f, 0x8b, 0x08, 0x00, ...Array(n).fill(0)]) })),
  );
}

/** Malformed versions of a valid JSON file: the body mutations, plus broken bytes. */
export function malformedJsonFile(base: Json): fc.Arbitrary<FileMutation> {
  return fc.oneof(malformedJson(base).map(({ how, bytes }) => ({ how, bytes })), brokenBytes(JSON.stringify(base)));
}
