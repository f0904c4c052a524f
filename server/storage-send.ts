// Answers a request with a stored file (the access check has already happened). Local disk streams it
// through the app. Object storage answers a download with 302 to a presigned URL that lives a few
// minutes; images shown inline are streamed through the app, since the CSP allows images from 'self' only.
import type { Response } from 'express';
import { pipeline } from 'node:stream/promises';
import type { Storage } from './storage.ts';
import { contentDisposition } from './storage-s3.ts';

export interface SendStoredOptions {
  contentType: string;
  /** Offer as a download with this name; without it the file is shown inline. */
  filename?: string;
  /** Cache-Control for the streamed file (redirects are never cached). */
  cacheControl?: string;
}

export async function sendStored(res: Response, storage: Storage, key: string, opts: SendStoredOptions): Promise<void> {
  const url = opts.filename ? await storage.downloadUrl(key, { filename: opts.filename, contentType: opts.contentType }) : null;
  if (url) {
    res.setHeader('Cache-Control', 'no-store');
    res.redirect(302, url);
    return;
  }
  res.setHeader('X-Content-Type-Options', 'nosniff');
  if (opts.cacheControl) res.setHeader('Cache-Control', opts.cacheControl);
  res.type(opts.contentType);
  if (opts.filename) res.setHeader('Content-Disposition', contentDisposition(opts.filename));
  if (storage.kind !== 'local') {
    const body = await storage.get(key);
    res.setHeader('Content-Length', String(await storage.size(key)));
    await pipeline(body, res);
    return;
  }
  const file = storage.path(key);
  await new Promise<void>((resolve, reject) =>
    res.sendFile(file, { dotfiles: 'allow' }, (err) => (err && !res.headersSent ? reject(err) : resolve())),
  );
}
