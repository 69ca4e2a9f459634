import type { Request, Response } from 'express';
import type { Encoded } from '../cache/encoded-json';

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
