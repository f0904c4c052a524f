import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError } from 'zod';

/** An error a card maker can read: a stable code, a sentence, and the HTTP status that fits. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    /** Extra response headers, e.g. Retry-After on a 429. */
    readonly headers: Record<string, string> = {},
  ) {
    super(message);
  }
}

export const unauthenticated = (message = 'Please sign in first.') => new AppError(401, 'UNAUTHENTICATED', message);
export const forbidden = (message = 'Your role in this workspace does not allow that.') => new AppError(403, 'FORBIDDEN', message);
export const notFound = (what = 'That page') => new AppError(404, 'NOT_FOUND', `${what} was not found.`);

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new AppError(404, 'NOT_FOUND', `There is no API route ${req.method} ${req.path}.`));
};

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (err instanceof ZodError) {
    const issue = err.issues[0];
    const field = issue?.path.join('.') || 'body';
    // details: every issue with its dotted path, so forms can show each error beside its field.
    const details = err.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
    res.status(400).json({ error: { code: 'VALIDATION', message: `${field}: ${issue?.message ?? 'invalid value'}`, field, details } });
    return;
  }
  if (err instanceof AppError) {
    for (const [name, value] of Object.entries(err.headers)) res.setHeader(name, value);
    res.status(err.status).json({ error: { code: err.code, message: err.message } });
    return;
  }
  // body-parser and similar libraries set status/type on the errors they throw.
  const status = typeof err?.status === 'number' ? err.status : 500;
  if (status === 413) {
    res.status(413).json({ error: { code: 'TOO_LARGE', message: 'The request is larger than the server accepts.' } });
    return;
  }
  if (status >= 400 && status < 500) {
    res.status(status).json({ error: { code: 'BAD_REQUEST', message: 'The request could not be read (malformed JSON?).' } });
    return;
  }
  req.log?.error({ err }, 'unhandled error');
  res.status(500).json({ error: { code: 'INTERNAL', message: 'Something went wrong on the server; it has been logged.' } });
};
