import type { NextFunction, Request, Response } from 'express';
import type { z } from 'zod';
import { badRequest } from '../../errors';

type Schemas = { body?: z.ZodType; query?: z.ZodType; params?: z.ZodType };
type Out<S, K extends keyof Schemas> = S extends { [P in K]: z.ZodType } ? z.output<S[K]> : undefined;
export type Input<S extends Schemas> = { body: Out<S, 'body'>; query: Out<S, 'query'>; params: Out<S, 'params'> };

/** Turns zod issues into `{ 'a.b': ['message'] }`. */
export function fieldErrors(issues: readonly z.core.$ZodIssue[], prefix = ''): Record<string, string[]> {
  const fields: Record<string, string[]> = {};
  for (const i of issues) {
    const key = [prefix, ...i.path.map(String)].filter(Boolean).join('.') || '_';
    (fields[key] ??= []).push(i.message);
  }
  return fields;
}

const NUL_MESSAGE = 'Text may not contain the NUL character (U+0000)';

/**
 * Field errors for every string in `v` that holds U+0000. PostgreSQL cannot store that character
 * in text (PostgreSQL documentation, "Character Types"), so such input would fail in the database
 * as a server error instead of a field error here.
 */
function nulFields(v: unknown, pathParts: string[], fields: Record<string, string[]>, depth = 0): void {
  if (typeof v === 'string') {
    if (v.includes('\u0000')) (fields[pathParts.filter(Boolean).join('.') || '_'] ??= []).push(NUL_MESSAGE);
    return;
  }
  if (depth > 32 || v === null || typeof v !== 'object') return;
  if (Array.isArray(v)) v.forEach((x, i) => nulFields(x, [...pathParts, String(i)], fields, depth + 1));
  else for (const [k, x] of Object.entries(v as Record<string, unknown>)) nulFields(x, [...pathParts, k], fields, depth + 1);
}

/**
 * Parses body, query and params with zod; a failure is a 400 with field errors, as is text
 * holding U+0000. The parsed values are kept in `res.locals.input` and handlers read only those
 * (`input(res)`).
 */
export function validate<S extends Schemas>(schemas: S) {
  return (req: Request, res: Response, next: NextFunction) => {
    const out: Record<string, unknown> = {};
    let fields: Record<string, string[]> = {};
    for (const part of ['params', 'query', 'body'] as const) {
      const schema = schemas[part];
      if (!schema) continue;
      const raw = part === 'body' ? (req.body ?? {}) : req[part];
      const parsed = schema.safeParse(raw);
      if (parsed.success) {
        out[part] = parsed.data;
        nulFields(parsed.data, [part === 'body' ? '' : part], fields);
      } else fields = { ...fields, ...fieldErrors(parsed.error.issues, part === 'body' ? '' : part) };
    }
    if (Object.keys(fields).length) return next(badRequest('Some fields need attention', fields));
    res.locals.input = out;
    next();
  };
}

export function input<S extends Schemas>(res: Response, _schemas?: S): Input<S> {
  return res.locals.input as Input<S>;
}
