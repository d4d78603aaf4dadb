import type { ErrorRequestHandler, RequestHandler } from 'express';
import { NotFoundError, OptimisticLockError, UniqueConstraintViolationException } from '@mikro-orm/core';
import type { Logger } from 'pino';
import { HttpError } from '../http-error.js';

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(HttpError.notFound(`No API route ${req.method} ${req.originalUrl}.`));
};

interface BodyParserError extends Error {
  status?: number;
  type?: string;
}

function toHttpError(err: unknown): HttpError | undefined {
  if (err instanceof HttpError) return err;
  if (err instanceof NotFoundError) return HttpError.notFound(err.message);
  if (err instanceof OptimisticLockError) return HttpError.conflict('stale_version', 'The record was changed by someone else; reload and try again.');
  if (err instanceof UniqueConstraintViolationException) return HttpError.conflict('duplicate', 'A record with the same unique value already exists.');
  const e = err as BodyParserError;
  if (e?.type === 'entity.parse.failed') return HttpError.badRequest('The request body is not valid JSON.');
  if (e?.type === 'entity.too.large') return new HttpError(413, 'too_large', 'The request body is too large.');
  if (typeof e?.status === 'number' && e.status >= 400 && e.status < 500) return new HttpError(e.status, 'bad_request', e.message);
  return undefined;
}

/** The one error handler: JSON `{error: {code, message, details?}}` with a fitting status. */
export function errorHandler(logger: Logger): ErrorRequestHandler {
  return (err, req, res, next) => {
    if (res.headersSent) return next(err);
    const known = toHttpError(err);
    if (!known) {
      logger.error({ err, method: req.method, url: req.originalUrl }, 'unhandled error');
      res.status(500).json({ error: { code: 'internal', message: 'Something went wrong on the server; the error was logged.' } });
      return;
    }
    if (known.status >= 500) logger.error({ err }, known.message);
    const body: Record<string, unknown> = { code: known.code, message: known.message };
    if (known.details !== undefined) body.details = known.details;
    res.status(known.status).json({ error: body });
  };
}
