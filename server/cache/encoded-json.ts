import { createHash } from 'node:crypto';
import { promisify } from 'node:util';
import { brotliCompress, brotliCompressSync, constants, gunzip, gzip, gzipSync } from 'node:zlib';

const gzipAsync = promisify(gzip);
const brotliAsync = promisify(brotliCompress);
const gunzipAsync = promisify(gunzip);

/** A JSON response encoded once: its bytes, a gzip copy when it is worth one, and its ETag. */
export type Encoded = { body: Buffer; gzip: Buffer | null; brotli: Buffer | null; etag: string };

/**
 * A response that never changes (a finished fit) is compressed once and sent many times, so the
 * slow best setting pays, up to a megabyte; that runs on libuv's thread pool, off the request thread.
 * A copy rebuilt at every change (the register, the model) is waited for by the readers that arrive
 * after a write: it takes fast settings (about a millisecond for the register of a large model) on
 * the request thread, because a trip through the thread pool waits for a whole turn of the event
 * loop, and under load a turn serves every open connection once.
 */
export async function encodeJson(value: unknown, lifetime: 'final' | 'until-changed' = 'final'): Promise<Encoded> {
  const body = Buffer.from(JSON.stringify(value));
  const worth = body.length > 16 * 1024;
  const brotliParams = (quality: number) => ({ params: { [constants.BROTLI_PARAM_QUALITY]: quality, [constants.BROTLI_PARAM_SIZE_HINT]: body.length } });
  const [gz, br] = !worth
    ? [null, null]
    : lifetime === 'until-changed'
      ? [gzipSync(body, { level: 6 }), brotliCompressSync(body, brotliParams(4))]
      : await Promise.all([gzipAsync(body, { level: 9 }), brotliAsync(body, brotliParams(body.length < 1 << 20 ? 11 : 6))]);
  return {
    body,
    gzip: gz,
    brotli: br,
    etag: `"${createHash('sha1').update(body).digest('base64url')}"`,
  };
}

/**
 * A JSON response stored as bytes (gzip or plain text): the gzip copy as stored, the text when a
 * client takes no gzip, and a brotli copy made once off the request thread.
 */
export async function storedEncoding(stored: { encoding: 'gzip' | 'identity'; data: Buffer }): Promise<Encoded> {
  const body = stored.encoding === 'gzip' ? await gunzipAsync(stored.data) : stored.data;
  const worth = body.length > 16 * 1024;
  const gz = stored.encoding === 'gzip' ? stored.data : worth ? await gzipAsync(body, { level: 6 }) : null;
  const br = worth ? await brotliAsync(body, { params: { [constants.BROTLI_PARAM_QUALITY]: body.length < 1 << 20 ? 11 : 6, [constants.BROTLI_PARAM_SIZE_HINT]: body.length } }) : null;
  return { body, gzip: gz, brotli: br, etag: `"${createHash('sha1').update(stored.data).digest('base64url')}"` };
}
