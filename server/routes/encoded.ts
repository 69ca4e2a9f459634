import { createHash } from 'node:crypto';
import { promisify } from 'node:util';
import { brotliCompress, constants, gzip } from 'node:zlib';

const gzipAsync = promisify(gzip);
const brotliAsync = promisify(brotliCompress);
import type { Request, Response } from 'express';

/** A JSON response encoded once: its bytes, a gzip copy when it is worth one, and its ETag. */
export type Encoded = { body: Buffer; gzip: Buffer | null; brotli: Buffer | null; etag: string };

/** Compression runs on libuv's thread pool, off the request thread. */
export async function encodeJson(value: unknown): Promise<Encoded> {
  const body = Buffer.from(JSON.stringify(value));
  const worth = body.length > 16 * 1024;
  // compressed once and sent many times, so the slow best setting pays up to a megabyte
  const quality = body.length < 1 << 20 ? 11 : 6;
  const [gz, br] = worth
    ? await Promise.all([gzipAsync(body, { level: 9 }), brotliAsync(body, { params: { [constants.BROTLI_PARAM_QUALITY]: quality, [constants.BROTLI_PARAM_SIZE_HINT]: body.length } })])
    : [null, null];
  return {
    body,
    gzip: gz,
    brotli: br,
    etag: `"${createHash('sha1').update(body).digest('base64url')}"`,
  };
}

/** Sends an encoded response: 304 when the client holds these bytes, else brotli or gzip when it accepts one. */
export function sendEncoded(req: Request, res: Response, encoded: Encoded) {
  res.set('ETag', encoded.etag).set('Cache-Control', 'private, no-cache').vary('Accept-Encoding');
  if (req.get('if-none-match') === encoded.etag) return void res.status(304).end();
  res.type('json');
  const accepts = req.get('accept-encoding') ?? '';
  if (encoded.brotli && /\bbr\b/.test(accepts)) return void res.set('Content-Encoding', 'br').send(encoded.brotli);
  if (encoded.gzip && /\bgzip\b/.test(accepts)) return void res.set('Content-Encoding', 'gzip').send(encoded.gzip);
  res.send(encoded.body);
}
