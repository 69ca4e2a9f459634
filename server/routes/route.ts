import type { RequestHandler } from 'express';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * Every API route is declared through this list, so the authorisation test can walk
 * all of them (a route missing from its expected-status table fails that test).
 */
export type ApiRoute = { method: Method; path: string; handlers: RequestHandler[] };

export const route = (method: Method, path: string, ...handlers: RequestHandler[]): ApiRoute => ({ method, path, handlers });
