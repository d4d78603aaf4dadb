import { HttpErrorResponse } from '@angular/common/http';

export interface FieldProblem {
  field: string;
  message: string;
}

/** The message of an API error `{error: {code, message, details}}`, or a plain fallback. */
export function apiErrorMessage(err: unknown, fallback = 'Something went wrong; try again.'): string {
  if (err instanceof HttpErrorResponse) {
    if (err.status === 0) return 'The server cannot be reached; check that Ligandry is running.';
    const message = (err.error as { error?: { message?: string } } | null)?.error?.message;
    if (message) return message;
  }
  return fallback;
}

export function apiErrorCode(err: unknown): string | undefined {
  return err instanceof HttpErrorResponse ? (err.error as { error?: { code?: string } } | null)?.error?.code : undefined;
}

export function apiFieldProblems(err: unknown): FieldProblem[] {
  if (!(err instanceof HttpErrorResponse)) return [];
  const details = (err.error as { error?: { details?: unknown } } | null)?.error?.details;
  return Array.isArray(details) ? (details as FieldProblem[]).filter((d) => typeof d?.field === 'string') : [];
}
