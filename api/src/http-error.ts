/** An error with an HTTP status and a stable machine-readable code (DESIGN §5). */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'HttpError';
  }

  static badRequest(message: string, details?: unknown) {
    return new HttpError(400, 'bad_request', message, details);
  }
  static unauthorized(message = 'Sign in to continue.') {
    return new HttpError(401, 'unauthorized', message);
  }
  static forbidden(message = 'Your role does not allow this.') {
    return new HttpError(403, 'forbidden', message);
  }
  static notFound(message: string) {
    return new HttpError(404, 'not_found', message);
  }
  static conflict(code: string, message: string, details?: unknown) {
    return new HttpError(409, code, message, details);
  }
}
