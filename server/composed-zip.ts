// A run's bundle as a composed zip: storage keeps only its layout (entry names, sizes, CRC-32s and the
// storage keys of the files already stored: the run's PDF, sheets, proof and reports, and each single's
// render), and a download streams the zip from those files (composeZip). Storage then holds no second
// copy of every card and of the PDF, and assembly does not write one.
import type { Request, Response } from 'express';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { z } from 'zod';
import { composeZip, type ZipSegment } from '../jobs/engine/zip-writer.ts';
import { mapLimited } from '../shared/map-limited.ts';
import { AppError } from './errors.ts';
import { contentDisposition } from './storage-s3.ts';
import type { Storage } from './storage.ts';

/** The layout of a composed zip is kept beside the name it is downloaded as: `<key>.parts.json`. */
export const layoutKeyOf = (key: string) => `${key}.parts.json`;

const layoutSchema = z.object({
  version: z.literal(1),
  mtime: z.string(),
  size: z.number().int().nonnegative(),
  parts: z.array(z.object({ name: z.string(), size: z.number().int().nonnegative(), crc: z.number().int().nonnegative(), key: z.string() })),
});
export type ComposedZipLayout = z.infer<typeof layoutSchema>;

/** The layout of a zip of `parts` (each part a stored key), with the zip's size. */
export function composedZipLayout(parts: ComposedZipLayout['parts'], mtime: Date): ComposedZipLayout {
  return { version: 1, mtime: mtime.toISOString(), size: composeZip(parts.map((p) => ({ ...p, source: p.key })), mtime).size, parts };
}

// Stored parts checked at once before a download starts (a HEAD each on object storage).
const CHECKS_AT_ONCE = 16;

/** Answers a download of a composed zip: 200 with the whole zip, or 206 with one byte range (so a large download can be resumed). */
export async function sendComposedZip(req: Request, res: Response, storage: Storage, layoutKey: string, filename: string): Promise<void> {
  const zip = await openComposedZip(storage, layoutKey);
  const { size } = zip;

  let start = 0;
  let end = size - 1;
  const range = req.headers.range ? req.range(size, { combine: true }) : undefined;
  if (range === -1) {
    res.status(416).setHeader('Content-Range', `bytes */${size}`).end();
    return;
  }
  if (Array.isArray(range) && range.type === 'bytes' && range.length === 1) {
    start = range[0]!.start;
    end = range[0]!.end;
    res.status(206).setHeader('Content-Range', `bytes ${start}-${end}/${size}`);
  }
  res.setHeader('X-Content-Type-Options', 'nosniff');
  res.setHeader('Cache-Control', 'private, no-store');
  res.setHeader('Accept-Ranges', 'bytes');
  res.type('application/zip');
  res.setHeader('Content-Disposition', contentDisposition(filename));
  res.setHeader('Content-Length', String(end - start + 1));
  if (req.method === 'HEAD' || size === 0) {
    res.end();
    return;
  }
  try {
    await pipeline(zip.read(start, end), res);
  } catch (err) {
    // The client went away, or a part failed midway: the response is cut off already (short of its
    // Content-Length, so the client knows), and nothing more can be sent.
    if (!res.headersSent) throw err;
    if ((err as NodeJS.ErrnoException).code !== 'ERR_STREAM_PREMATURE_CLOSE') req.log?.warn({ err, layoutKey }, 'bundle download cut short');
  }
}

/**
 * A stored composed zip, ready to read: its size, and its bytes start..end (inclusive) as a stream.
 * Every part is checked first, so a part gone missing gives a clear error (BUNDLE_PART_MISSING)
 * instead of a zip cut short.
 */
export async function openComposedZip(storage: Storage, layoutKey: string): Promise<{ size: number; read: (start: number, end: number) => Readable }> {
  const layout = layoutSchema.parse(JSON.parse((await streamToBuffer(await storage.get(layoutKey))).toString('utf8')));
  const { segments, size } = composeZip(
    layout.parts.map((p) => ({ ...p, source: p.key })),
    new Date(layout.mtime),
  );
  const sizes = await mapLimited(layout.parts, CHECKS_AT_ONCE, (p) => storage.size(p.key).catch(() => -1));
  const bad = layout.parts.find((p, i) => sizes[i] !== p.size);
  if (bad) {
    throw new AppError(500, 'BUNDLE_PART_MISSING', `"${bad.name}" of this bundle is missing or changed in storage; run the recipe again to make a new bundle.`);
  }
  return { size, read: (start, end) => Readable.from(zipBytes(storage, segments, start, end)) };
}

/** The bytes start..end (inclusive) of a composed zip, read part by part from storage. */
async function* zipBytes(storage: Storage, segments: ReadonlyArray<ZipSegment<string>>, start: number, end: number): AsyncGenerator<Buffer> {
  let at = 0;
  for (const s of segments) {
    const length = 'bytes' in s ? s.bytes.length : s.size;
    const from = Math.max(start, at);
    const to = Math.min(end + 1, at + length);
    if (from < to) {
      if ('bytes' in s) yield s.bytes.subarray(from - at, to - at);
      else for await (const chunk of await storage.get(s.source, { start: from - at, end: to - at - 1 })) yield chunk as Buffer;
    }
    at += length;
    if (at > end) return;
  }
}

async function streamToBuffer(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const c of stream) chunks.push(c as Buffer);
  return Buffer.concat(chunks);
}
