import { createHash } from 'node:crypto';
import { promisify } from 'node:util';
import { brotliCompress, brotliCompressSync, constants, gzip, gzipSync } from 'node:zlib';

const gzipAsync = promisify(gzip);
const brotliAsync = promisify(brotliCompress);
import type { Request, Response } from 'express';

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
