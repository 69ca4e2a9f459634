import type { RequestHandler } from 'express';
import { z } from 'zod';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * Every API route is declared through this list, so the authorisation test can walk
 * all of them (a route missing from its expected-status table fails that test).
 */
export type ApiRoute = { method: Method; path: string; handlers: RequestHandler[] };

/**
 * A numeric id in the address, e.g. idParam('fit id'). Build it once per module: a schema costs
 * more to build than to use, and these run on every request.
 */
export const idParam = (what: string) => z.coerce.number({ error: `the ${what} in the address must be a number` }).int().positive();

export const route = (method: Method, path: string, ...handlers: RequestHandler[]): ApiRoute => ({ method, path, handlers });
