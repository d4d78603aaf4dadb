import type { z } from 'zod';
import { HttpError } from '../http-error.js';

export interface FieldProblem {
  field: string;
  message: string;
}

function describe(issue: z.core.$ZodIssue): FieldProblem {
  const field = issue.path.length ? issue.path.map(String).join('.') : '(whole body)';
  if (issue.code === 'invalid_type') {
    const missing = /received undefined/.test(issue.message);
    return { field, message: missing ? 'is required' : `must be ${issue.expected === 'string' ? 'text' : `a ${issue.expected}`}` };
  }
  return { field, message: issue.message };
}

/** Parses `value` with the schema or throws a 400 naming every field that is wrong. */
export function parse<S extends z.ZodType>(schema: S, value: unknown, where: 'body' | 'query' | 'path'): z.infer<S> {
  const result = schema.safeParse(value ?? {});
  if (result.success) return result.data;
  const problems = result.error.issues.map(describe);
  const summary = problems.map((p) => `${p.field} ${p.message}`).join('; ');
  throw HttpError.badRequest(`Invalid request ${where}: ${summary}`, problems);
}
