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
/** A high surrogate not followed by a low one, or a low one not preceded by a high one. */
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;
const SURROGATE_MESSAGE = 'Text may not contain a lone UTF-16 surrogate (U+D800–U+DFFF unpaired)';

/** The message for text the database cannot store, or undefined when it can. */
function unstorable(s: string): string | undefined {
  if (s.includes('\u0000')) return NUL_MESSAGE;
  // A lone surrogate is not a Unicode scalar value, so it has no UTF-8 form: PostgreSQL refuses it
  // in text and jsonb (PostgreSQL documentation, "Character Types" and "JSON Types").
  if (LONE_SURROGATE.test(s)) return SURROGATE_MESSAGE;
  return undefined;
}

/**
 * Field errors for every string in `v` (values and object keys) that PostgreSQL cannot store: text
 * holding U+0000 (PostgreSQL documentation, "Character Types") or a lone UTF-16 surrogate. Such
 * input would fail in the database as a server error instead of a field error here.
 */
function unstorableFields(v: unknown, pathParts: string[], fields: Record<string, string[]>, depth = 0): void {
  const at = (parts: string[]) => parts.filter(Boolean).join('.') || '_';
  if (typeof v === 'string') {
    const problem = unstorable(v);
    if (problem) (fields[at(pathParts)] ??= []).push(problem);
    return;
  }
  if (depth > 32 || v === null || typeof v !== 'object') return;
  if (Array.isArray(v)) v.forEach((x, i) => unstorableFields(x, [...pathParts, String(i)], fields, depth + 1));
  else
    for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
      const keyProblem = unstorable(k);
      if (keyProblem) (fields[at([...pathParts, k.replace(new RegExp(LONE_SURROGATE.source, 'g'), '\uFFFD')])] ??= []).push(keyProblem);
      else unstorableFields(x, [...pathParts, k], fields, depth + 1);
    }
}

/**
 * Parses body, query and params with zod; a failure is a 400 with field errors, as is text
 * holding U+0000 or a lone surrogate. The parsed values are kept in `res.locals.input` and handlers read only those
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
        unstorableFields(parsed.data, [part === 'body' ? '' : part], fields);
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
