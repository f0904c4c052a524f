// Reading an art set from a folder or a zip. Zips are read through their central directory
// (unzipper Open.file) and every name is validated here, never trusted: unzipper's own extract()
// lets sibling prefixes through and reports symlinks as files (REFERENCES.md "unzipper"). Nothing is
// ever extracted to disk; callers read one entry at a time into memory with its real size counted.
import { lstat, open, readdir, readFile, stat } from 'node:fs/promises';
import path from 'node:path';
import { crc32 } from 'node:zlib';
import { parse as parseCsv } from 'csv-parse/sync';
import unzipper from 'unzipper';
import { BleedwrightError } from '../../shared/errors.ts';
import { MAX_COPIES } from '../../shared/recipe.ts';
import type { ManifestRow } from '../../shared/deck.ts';

export type ArchiveLimits = {
  /** Largest inflated size of one entry, in bytes. */
  maxEntryBytes: number;
  /** Largest inflated size of all entries together. */
  maxTotalBytes: number;
  maxEntries: number;
  /** Largest inflated : compressed ratio, checked for entries over ratioFloorBytes. */
  maxRatio: number;
  ratioFloorBytes: number;
};

export const DEFAULT_ARCHIVE_LIMITS: ArchiveLimits = {
  maxEntryBytes: 200 * 1024 * 1024,
  maxTotalBytes: 4 * 1024 * 1024 * 1024,
  maxEntries: 5000,
  maxRatio: 200,
  ratioFloorBytes: 10 * 1024 * 1024,
};

export type EntryKind = 'image' | 'manifest' | 'back-candidate' | 'junk' | 'other';
export type ArtEntry = { path: string; kind: EntryKind; size: number };
export type SkippedEntry = { path: string; reason: string };

export type ArtSet = {
  source: string;
  type: 'zip' | 'folder';
  /** Top folder stripped from every path ("" when none). */
  root: string;
  /** Usable entries: images, back candidates and the manifest. */
  entries: ArtEntry[];
  /** Files left out (OS junk, non-images) and why. */
  skipped: SkippedEntry[];
  manifest: ManifestRow[] | null;
  /** Internal readers; use readEntry(). */
  readers: Map<string, () => Promise<Buffer>>;
  /** Internal; use entryFingerprint(). */
  fingerprints: Map<string, () => Promise<string>>;
  limits: ArchiveLimits;
  bytesRead: { total: number };
};

export const IMAGE_EXTENSIONS = ['.png', '.jpg', '.jpeg', '.webp', '.tif', '.tiff'];
const ARCHIVE_EXTENSIONS = ['.zip', '.7z', '.rar', '.tar', '.gz', '.tgz', '.bz2', '.xz', '.zst', '.cbz', '.cbr', '.jar'];
const BACK_NAME = /(^|[-_ .])(back|backs|reverse)([-_ .]|$)/i;

/** OS junk that archivers and desktops add: skipped and listed in the report. */
export function junkReason(p: string): string | null {
  const parts = p.split('/');
  const base = parts[parts.length - 1]!;
  if (parts.includes('__MACOSX')) return 'macOS archive metadata (__MACOSX)';
  if (base.startsWith('._')) return 'macOS resource fork (._ file)';
  if (base === '.DS_Store') return 'macOS folder settings (.DS_Store)';
  if (base.toLowerCase() === 'thumbs.db') return 'Windows thumbnail cache (Thumbs.db)';
  if (base.toLowerCase() === 'desktop.ini') return 'Windows folder settings (desktop.ini)';
  return null;
}

function classify(p: string): EntryKind {
  if (junkReason(p)) return 'junk';
  const base = p.split('/').pop()!;
  const ext = path.posix.extname(base).toLowerCase();
  if (base.toLowerCase() === 'manifest.csv') return 'manifest';
  if (IMAGE_EXTENSIONS.includes(ext)) return BACK_NAME.test(base.slice(0, -ext.length)) ? 'back-candidate' : 'image';
  return 'other';
}

/**
 * Validates a zip entry name and returns it normalised, or throws ARCHIVE_PATH.
 * Refuses NUL, backslashes, absolute paths, drive letters and anything that leaves the root.
 */
export function safeEntryName(raw: string): string {
  const shown = JSON.stringify(raw.replace(/\0/g, '\\0'));
  const fail = (why: string) => new BleedwrightError('ARCHIVE_PATH', `${shown} ${why}`);
  if (raw.includes('\0')) throw fail('contains a NUL character');
  if (raw.includes('\\')) throw fail('contains a backslash; zip paths use /');
  if (raw.startsWith('/')) throw fail('is an absolute path');
  if (/^[a-zA-Z]:/.test(raw)) throw fail('starts with a drive letter');
  const normal = path.posix.normalize(raw);
  const rel = path.posix.relative('/root', path.posix.join('/root', normal));
  if (rel === '..' || rel.startsWith('../') || path.posix.isAbsolute(rel) || normal.startsWith('../') || normal === '..') {
    throw fail('points outside the archive');
  }
  return normal.replace(/^\.\//, '').replace(/\/$/, '');
}

// CP437, the zip default for names without the UTF-8 flag (bit 11): bytes 0x80-0xFF.
const CP437_HIGH =
  'ÇüéâäàåçêëèïîìÄÅÉæÆôöòûùÿÖÜ¢£¥₧ƒáíóúñÑªº¿⌐¬½¼¡«»░▒▓│┤╡╢╖╕╣║╗╝╜╛┐└┴┬├─┼╞╟╚╔╩╦╠═╬╧╨╤╥╙╘╒╓╫╪┘┌█▄▌▐▀αßΓπΣσµτΦΘΩδ∞φε∩≡±≥≤⌠⌡÷≈°∙·√ⁿ²■\u00a0';

function decodeName(buf: Buffer, utf8: boolean): string {
  if (utf8 || buf.every((b) => b < 0x80)) return buf.toString('utf8');
  return Array.from(buf, (b) => (b < 0x80 ? String.fromCharCode(b) : CP437_HIGH[b - 0x80]!)).join('');
}

function isArchiveName(p: string): boolean {
  const lower = p.toLowerCase();
  return ARCHIVE_EXTENSIONS.some((ext) => lower.endsWith(ext));
}

async function readCounted(stream: NodeJS.ReadableStream & { destroy?: () => void }, name: string, limits: ArchiveLimits, bytesRead: { total: number }, compressed: number): Promise<Buffer> {
  const chunks: Buffer[] = [];
  let size = 0;
  for await (const chunk of stream as AsyncIterable<Buffer>) {
    size += chunk.length;
    bytesRead.total += chunk.length;
    if (size > limits.maxEntryBytes) {
      stream.destroy?.();
      throw new BleedwrightError('ARCHIVE_TOO_LARGE', `"${name}" inflates to more than ${formatBytes(limits.maxEntryBytes)}, the limit for one file`);
    }
    if (bytesRead.total > limits.maxTotalBytes) {
      stream.destroy?.();
      throw new BleedwrightError('ARCHIVE_TOO_LARGE', `the archive inflates to more than ${formatBytes(limits.maxTotalBytes)} in total`);
    }
    if (size > limits.ratioFloorBytes && compressed > 0 && size / compressed > limits.maxRatio) {
      stream.destroy?.();
      throw new BleedwrightError('ARCHIVE_RATIO', `"${name}" expands more than ${limits.maxRatio} times when unpacked, which looks like a zip bomb`);
    }
    chunks.push(chunk);
  }
  return Buffer.concat(chunks);
}

const LOCAL_HEADER_SIGNATURE = 0x04034b50;
const LOCAL_HEADER_BYTES = 30;

/**
 * A stored (not deflated) entry, the usual case for PNG art, read with one positioned read instead of
 * through the inflate stream, which cost about three times the CPU per card. The sizes come from the
 * central directory (already checked against the limits); the local header is read for where the data
 * starts (APPNOTE.TXT 4.3.7: name and extra field lengths at offsets 26 and 28), and the CRC-32 is
 * checked, so a damaged entry is refused as the inflate path would.
 */
async function readStored(zipPath: string, f: unzipper.File, name: string, limits: ArchiveLimits, bytesRead: { total: number }): Promise<Buffer> {
  if (f.compressedSize !== f.uncompressedSize) throw new BleedwrightError('ARCHIVE_UNREADABLE', `"${name}" is stored with two different sizes`);
  bytesRead.total += f.uncompressedSize;
  if (bytesRead.total > limits.maxTotalBytes) {
    throw new BleedwrightError('ARCHIVE_TOO_LARGE', `the archive inflates to more than ${formatBytes(limits.maxTotalBytes)} in total`);
  }
  const handle = await open(zipPath, 'r');
  try {
    const header = Buffer.alloc(LOCAL_HEADER_BYTES);
    const got = await handle.read(header, 0, LOCAL_HEADER_BYTES, f.offsetToLocalFileHeader);
    if (got.bytesRead !== LOCAL_HEADER_BYTES || header.readUInt32LE(0) !== LOCAL_HEADER_SIGNATURE) throw new Error('no local file header where the directory points');
    const start = f.offsetToLocalFileHeader + LOCAL_HEADER_BYTES + header.readUInt16LE(26) + header.readUInt16LE(28);
    const data = Buffer.allocUnsafe(f.uncompressedSize);
    const { bytesRead: n } = await handle.read(data, 0, data.length, start);
    if (n !== data.length) throw new Error('the file ends inside this entry');
    if (crc32(data) !== f.crc32 >>> 0) throw new Error('its CRC-32 does not match; the zip is damaged');
    return data;
  } finally {
    await handle.close();
  }
}

function formatBytes(n: number): string {
  return n >= 1024 * 1024 ? `${Math.round(n / (1024 * 1024))} MB` : `${Math.round(n / 1024)} KB`;
}

type RawEntry = { path: string; size: number; read: () => Promise<Buffer>; fingerprint: () => Promise<string> };

async function listZip(file: string, limits: ArchiveLimits, bytesRead: { total: number }): Promise<{ raw: RawEntry[]; skipped: SkippedEntry[] }> {
  let dir: unzipper.CentralDirectory;
  try {
    dir = await unzipper.Open.file(file);
  } catch (err) {
    throw new BleedwrightError('ARCHIVE_UNREADABLE', `the zip file could not be read (${(err as Error).message})`);
  }
  if (dir.files.length > limits.maxEntries) {
    throw new BleedwrightError('ARCHIVE_TOO_MANY_ENTRIES', `the zip has ${dir.files.length} entries, over the limit of ${limits.maxEntries}`);
  }
  const raw: RawEntry[] = [];
  const skipped: SkippedEntry[] = [];
  const seen = new Set<string>();
  let declaredTotal = 0;
  for (const f of dir.files) {
    const name = safeEntryName(decodeName(f.pathBuffer, (f.flags & 0x800) !== 0));
    const unixMode = (f.externalFileAttributes >>> 16) & 0o170000;
    if (unixMode === 0o120000) throw new BleedwrightError('ARCHIVE_SYMLINK', `"${name}" is a symbolic link; links are not accepted in art sets`);
    if (f.type === 'Directory' || name === '' || name.endsWith('/')) continue;
    if (isArchiveName(name)) throw new BleedwrightError('ARCHIVE_NESTED', `"${name}" is an archive inside the archive; unpack it and zip the images together`);
    if ((f.flags & 0x1) !== 0) throw new BleedwrightError('ARCHIVE_UNREADABLE', `"${name}" is password-protected`);
    if (f.uncompressedSize > limits.maxEntryBytes) {
      throw new BleedwrightError('ARCHIVE_TOO_LARGE', `"${name}" inflates to more than ${formatBytes(limits.maxEntryBytes)}, the limit for one file`);
    }
    if (f.uncompressedSize > limits.ratioFloorBytes && f.compressedSize > 0 && f.uncompressedSize / f.compressedSize > limits.maxRatio) {
      throw new BleedwrightError('ARCHIVE_RATIO', `"${name}" expands more than ${limits.maxRatio} times when unpacked, which looks like a zip bomb`);
    }
    declaredTotal += f.uncompressedSize;
    if (declaredTotal > limits.maxTotalBytes) {
      throw new BleedwrightError('ARCHIVE_TOO_LARGE', `the archive inflates to more than ${formatBytes(limits.maxTotalBytes)} in total`);
    }
    if (seen.has(name)) {
      skipped.push({ path: name, reason: 'appears twice in the zip; the first copy was used' });
      continue;
    }
    seen.add(name);
    // What zip tools trust to tell one version of a file from another, read from the central directory.
    const fingerprint = `zip crc32 ${f.crc32} size ${f.uncompressedSize} packed ${f.compressedSize} method ${f.compressionMethod}`;
    raw.push({
      path: name,
      size: f.uncompressedSize,
      fingerprint: async () => fingerprint,
      read: async () => {
        try {
          if (f.compressionMethod === 0) return await readStored(file, f, name, limits, bytesRead);
          return await readCounted(f.stream(), name, limits, bytesRead, f.compressedSize);
        } catch (err) {
          if (err instanceof BleedwrightError) throw err;
          throw new BleedwrightError('ARCHIVE_UNREADABLE', `"${name}" could not be unpacked (${(err as Error).message})`);
        }
      },
    });
  }
  return { raw, skipped };
}

async function listFolder(root: string, limits: ArchiveLimits): Promise<{ raw: RawEntry[]; skipped: SkippedEntry[] }> {
  const raw: RawEntry[] = [];
  const skipped: SkippedEntry[] = [];
  const walk = async (dir: string, rel: string): Promise<void> => {
    const items = await readdir(dir, { withFileTypes: true });
    for (const item of items) {
      const relPath = rel ? `${rel}/${item.name}` : item.name;
      const full = path.join(dir, item.name);
      const info = await lstat(full);
      if (info.isSymbolicLink()) {
        skipped.push({ path: relPath, reason: 'symbolic link; links are not followed' });
      } else if (info.isDirectory()) {
        await walk(full, relPath);
      } else if (info.isFile()) {
        if (raw.length >= limits.maxEntries) {
          throw new BleedwrightError('ARCHIVE_TOO_MANY_ENTRIES', `the folder has more than ${limits.maxEntries} files`);
        }
        if (isArchiveName(relPath)) {
          skipped.push({ path: relPath, reason: 'an archive inside the art set; archives are not opened' });
          continue;
        }
        const read = async () => {
          if (info.size > limits.maxEntryBytes) {
            throw new BleedwrightError('ARCHIVE_TOO_LARGE', `"${relPath}" is larger than ${formatBytes(limits.maxEntryBytes)}, the limit for one file`);
          }
          return readFile(full);
        };
        raw.push({
          path: relPath,
          size: info.size,
          read,
          // A folder has no stored checksums: the same CRC-32 and size a zip would hold, from the bytes.
          fingerprint: async () => {
            const data = await read();
            return `zip crc32 ${crc32(data)} size ${data.length}`;
          },
        });
      }
    }
  };
  await walk(root, '');
  return { raw, skipped };
}

/** The one folder every usable entry sits under, if there is exactly one (desktop archivers add it). */
function commonTopFolder(paths: readonly string[]): string {
  if (paths.length === 0) return '';
  const first = paths[0]!.split('/');
  if (first.length < 2) return '';
  const top = first[0]!;
  return paths.every((p) => p.startsWith(`${top}/`)) ? top : '';
}

/** Opens a zip or a folder of card art; validates names, classifies entries, parses manifest.csv. */
export async function openArtSet(source: string, limits: Partial<ArchiveLimits> = {}): Promise<ArtSet> {
  const lim = { ...DEFAULT_ARCHIVE_LIMITS, ...limits };
  let info;
  try {
    info = await stat(source);
  } catch {
    throw new BleedwrightError('SOURCE_NOT_FOUND', `"${source}" does not exist`);
  }
  const bytesRead = { total: 0 };
  const type = info.isDirectory() ? 'folder' : 'zip';
  const { raw, skipped } = type === 'folder' ? await listFolder(source, lim) : await listZip(source, lim, bytesRead);

  const usable = raw.filter((e) => !junkReason(e.path));
  const root = commonTopFolder(usable.map((e) => e.path));
  const entries: ArtEntry[] = [];
  const readers = new Map<string, () => Promise<Buffer>>();
  const fingerprints = new Map<string, () => Promise<string>>();
  for (const e of raw) {
    const rel = root && e.path.startsWith(`${root}/`) ? e.path.slice(root.length + 1) : e.path;
    const kind = classify(rel);
    if (kind === 'junk') {
      skipped.push({ path: e.path, reason: junkReason(e.path)! });
    } else if (kind === 'other') {
      skipped.push({ path: e.path, reason: 'not a card image (PNG, JPEG, WebP or TIFF)' });
    } else {
      entries.push({ path: rel, kind, size: e.size });
      readers.set(rel, e.read);
      fingerprints.set(rel, e.fingerprint);
    }
  }
  if (!entries.some((e) => e.kind === 'image' || e.kind === 'back-candidate')) {
    throw new BleedwrightError('ARCHIVE_EMPTY', 'no card images (PNG, JPEG, WebP or TIFF) were found in the art set');
  }
  const set: ArtSet = { source, type, root, entries, skipped, manifest: null, readers, fingerprints, limits: lim, bytesRead };
  const manifestEntry = entries.find((e) => e.kind === 'manifest' && e.path.toLowerCase() === 'manifest.csv');
  if (manifestEntry) set.manifest = parseManifest((await readEntry(set, manifestEntry.path)).toString('utf8'), new Set(imagePaths(set)));
  return set;
}

/** Paths of every image in the set (fronts and back candidates). */
export function imagePaths(set: Pick<ArtSet, 'entries'>): string[] {
  return set.entries.filter((e) => e.kind === 'image' || e.kind === 'back-candidate').map((e) => e.path);
}

/** Reads one entry into memory, counting the real inflated bytes against the limits. */
export async function readEntry(set: ArtSet, entryPath: string): Promise<Buffer> {
  const read = set.readers.get(entryPath);
  if (!read) throw new BleedwrightError('SOURCE_NOT_FOUND', `"${entryPath}" is not in the art set`);
  return read();
}

/**
 * Identifies one entry's bytes without inflating them: for a zip, the CRC-32, sizes and method its
 * central directory records; for a folder, the CRC-32 and size of the file (read once). Two different
 * versions of a file with the same name get the same fingerprint only when their CRC-32s collide at
 * equal sizes, which is the check zip tools themselves rely on (render cache keys, see renderCacheKey).
 */
export async function entryFingerprint(set: ArtSet, entryPath: string): Promise<string> {
  const fingerprint = set.fingerprints.get(entryPath);
  if (!fingerprint) throw new BleedwrightError('SOURCE_NOT_FOUND', `"${entryPath}" is not in the art set`);
  return fingerprint();
}

/** Parses manifest.csv (columns file, copies, back, title); row numbers count the header as row 1. */
export function parseManifest(text: string, known: ReadonlySet<string>): ManifestRow[] {
  let records: Record<string, string>[];
  try {
    records = parseCsv(text.replace(/^\uFEFF/, ''), {
      columns: (header: string[]) => header.map((h) => h.trim().toLowerCase()),
      skip_empty_lines: true,
      trim: true,
      relax_column_count: true,
    });
  } catch (err) {
    throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv could not be read (${(err as Error).message})`);
  }
  if (records.length > 0 && !('file' in records[0]!)) {
    throw new BleedwrightError('MANIFEST_INVALID', 'manifest.csv needs a "file" column (columns: file, copies, back, title)');
  }
  const clean = (p: string) => p.replace(/\\/g, '/').replace(/^\.\//, '');
  const seen = new Set<string>();
  return records.map((rec, i) => {
    const row = i + 2;
    const file = clean(rec.file ?? '');
    if (!file) throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv row ${row}: "file" is empty`);
    if (!known.has(file)) throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv row ${row}: file "${file}" is not in the art set`);
    if (seen.has(file)) throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv row ${row}: file "${file}" is listed twice`);
    seen.add(file);
    const copiesText = rec.copies ?? '';
    const copies = copiesText === '' ? 1 : Number(copiesText);
    if (!Number.isInteger(copies) || copies < 0 || copies > MAX_COPIES) {
      throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv row ${row}: copies "${copiesText}" must be a whole number from 0 to ${MAX_COPIES}`);
    }
    const back = rec.back ? clean(rec.back) : null;
    if (back && !known.has(back)) throw new BleedwrightError('MANIFEST_INVALID', `manifest.csv row ${row}: back "${back}" is not in the art set`);
    return { file, copies, back, title: rec.title ? rec.title : null, row };
  });
}
