import { Router, type RequestHandler } from 'express';
import type { Action } from './policy';
import { allow } from './middleware/auth';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/** One mounted route; the role-matrix test walks this list. `action: null` is public. */
export interface RouteSpec {
  method: Method;
  path: string;
  action: Action | null;
}

/** A router whose routes each name their policy action, recorded for the role-matrix test. */
export function routeTable(base: string) {
  const router = Router();
  const specs: RouteSpec[] = [];
  const add = (method: Method, path: string, action: Action | null, ...handlers: RequestHandler[]) => {
    specs.push({ method, path: base + (path === '/' ? '' : path), action });
    router[method](path, ...(action ? [allow(action)] : []), ...handlers);
  };
  return { router, specs, add, base };
}
export type RouteTable = ReturnType<typeof routeTable>;
