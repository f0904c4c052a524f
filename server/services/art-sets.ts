// Art sets: a zip is hashed, checked by the engine's archive reader, described entry by entry (sha256,
// pixel size, format) and stored once per workspace by its sha256. Rows go in one transaction; on any
// failure the temp file is removed and nothing remains.
import { createHash } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdir, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import type { Knex } from 'knex';
import sharp from 'sharp';
import yazl from 'yazl';
import type { ArtSetDetail, ArtSetSummary } from '../../shared/api/runs.ts';
import { BleedwrightError } from '../../shared/errors.ts';
import { IMAGE_EXTENSIONS, openArtSet, readEntry, safeEntryName, type ArtSet } from '../../jobs/engine/archive.ts';
import { AppError, notFound } from '../errors.ts';
import {
  findArtSet,
  findEntry,
  findRevision,
  findRevisionBySha,
  insertArtSet,
  insertEntries,
  insertRevision,
  listArtSets,
  listEntries,
  listRevisions,
  touchArtSet,
  type NewEntry,
} from '../db/art-sets.ts';
import { storageKeys, type Storage } from '../storage.ts';

export interface ArtSetDeps {
  db: Knex;
  storage: Storage;
  tmpDir: string;
}

const iso = (d: Date | string) => new Date(d).toISOString();
const sha256 = (buf: Buffer) => createHash('sha256').update(buf).digest('hex');

export async function hashFile(file: string): Promise<string> {
  const hash = createHash('sha256');
  for await (const chunk of createReadStream(file)) hash.update(chunk as Buffer);
  return hash.digest('hex');
}

/** Reads each usable entry once: its sha256 and, for images, the pixel size and format from the header. */
async function describeEntries(set: ArtSet): Promise<NewEntry[]> {
  const out: NewEntry[] = [];
  for (const e of set.entries) {
    const buf = await readEntry(set, e.path);
    let width: number | null = null;
    let height: number | null = null;
    let format: string | null = null;
    if (e.kind === 'image' || e.kind === 'back-candidate') {
      try {
        const meta = await sharp(buf, { limitInputPixels: false }).metadata();
        width = meta.width ?? null;
        height = meta.height ?? null;
        format = meta.format ?? null;
      } catch {
        // Unreadable images stay listed with no size; the run reports them as skipped cards.
      }
    }
    out.push({ path: e.path, kind: e.kind, bytes: buf.length, sha256: sha256(buf), width, height, format });
  }
  return out;
}

export type ImportResult = { artSetId: string; revision: number; deduplicated: boolean };

/**
 * Imports a zip lying at `tempFile` (which this function always removes): a new art set, or a new
 * revision of `artSetId`. The same bytes already stored in this workspace return the existing one.
 */
export async function importArtSetZip(
  deps: ArtSetDeps,
  opts: { workspaceId: string; userId: string | null; tempFile: string; name?: string | null; artSetId?: string; note?: string | null },
): Promise<ImportResult> {
  const { db, storage } = deps;
  let movedKey: string | null = null;
  try {
    const hash = await hashFile(opts.tempFile);
    const existing = await findRevisionBySha(db, opts.workspaceId, hash);
    if (existing) {
      // The same bytes again also put back a zip the storage lacks (e.g. after moving to object storage).
      const existingKey = storageKeys.blob(opts.workspaceId, hash);
      if (!(await storage.exists(existingKey))) await storage.putFile(existingKey, opts.tempFile);
      return { artSetId: existing.art_set_id, revision: existing.revision, deduplicated: true };
    }

    const set = await openArtSet(opts.tempFile);
    const entries = await describeEntries(set);
    const bytes = (await stat(opts.tempFile)).size;
    const key = storageKeys.blob(opts.workspaceId, hash);
    if (await storage.exists(key)) await rm(opts.tempFile, { force: true });
    else {
      await storage.putFile(key, opts.tempFile);
      movedKey = key;
    }
    try {
      const result = await db.transaction(async (trx) => {
        let artSetId = opts.artSetId;
        if (artSetId) {
          const row = await trx('art_sets').where({ workspace_id: opts.workspaceId, id: artSetId }).forUpdate().first();
          if (!row) throw notFound('That art set');
          await touchArtSet(trx, artSetId);
        } else {
          artSetId = (await insertArtSet(trx, { workspace_id: opts.workspaceId, name: opts.name?.trim() || 'Art set' })).id;
        }
        const last = await findRevision(trx, artSetId);
        const revision = (last?.revision ?? 0) + 1;
        const rev = await insertRevision(trx, {
          art_set_id: artSetId,
          workspace_id: opts.workspaceId,
          revision,
          sha256: hash,
          bytes,
          note: opts.note ?? null,
          skipped: set.skipped,
          created_by: opts.userId,
        });
        await insertEntries(trx, rev.id, entries);
        return { artSetId, revision, deduplicated: false };
      });
      movedKey = null;
      return result;
    } catch (err) {
      // Two uploads of the same bytes at once: the other one won; answer with it.
      if ((err as { code?: string }).code === '23505') {
        const winner = await findRevisionBySha(db, opts.workspaceId, hash);
        if (winner) {
          movedKey = null;
          return { artSetId: winner.art_set_id, revision: winner.revision, deduplicated: true };
        }
      }
      throw err;
    }
  } finally {
    await rm(opts.tempFile, { force: true });
    if (movedKey && !(await findRevisionBySha(db, opts.workspaceId, path.basename(movedKey)))) await storage.remove(movedKey);
  }
}

export async function artSetSummaries(db: Knex, workspaceId: string): Promise<ArtSetSummary[]> {
  return (await listArtSets(db, workspaceId)).map((a) => ({
    id: a.id,
    name: a.name,
    revision: a.revision,
    entryCount: a.entry_count,
    cardCount: a.card_count,
    createdAt: iso(a.created_at),
    updatedAt: iso(a.updated_at),
  }));
}

export async function artSetDetail(db: Knex, workspaceId: string, artSetId: string, revision?: number): Promise<ArtSetDetail> {
  const set = await findArtSet(db, workspaceId, artSetId);
  if (!set) throw notFound('That art set');
  const rev = await findRevision(db, set.id, revision);
  if (!rev) throw notFound('That art set revision');
  const revisions = await listRevisions(db, set.id);
  const entries = await listEntries(db, rev.id);
  return {
    id: set.id,
    name: set.name,
    revision: rev.revision,
    revisions: revisions.map((r) => ({ revision: r.revision, createdAt: iso(r.created_at), entryCount: r.entry_count, sha256: r.sha256, note: r.note })),
    entries: entries.map((e) => ({ path: e.path, kind: e.kind, bytes: Number(e.bytes), sha256: e.sha256, width: e.width, height: e.height, format: e.format })),
    skipped: rev.skipped,
  };
}

/** A revision of an art set of this workspace (404 otherwise) and a local copy of its zip. */
export async function revisionZip(deps: Pick<ArtSetDeps, 'db' | 'storage' | 'tmpDir'>, workspaceId: string, artSetId: string, revision?: number) {
  const set = await findArtSet(deps.db, workspaceId, artSetId);
  const rev = set ? await findRevision(deps.db, set.id, revision) : undefined;
  if (!set || !rev) throw notFound('That art set revision');
  return { set, rev, zipPath: await deps.storage.fetchFile(storageKeys.blob(workspaceId, rev.sha256), deps.tmpDir) };
}

const THUMB_PX = 240;

/** A webp thumbnail (at most 240 px a side) of one entry, cached in storage by the entry's sha256; returns its key. */
export async function entryThumbnail(deps: Pick<ArtSetDeps, 'db' | 'storage' | 'tmpDir'>, workspaceId: string, artSetId: string, revision: number, entryPath: string): Promise<string> {
  const { rev, zipPath } = await revisionZip(deps, workspaceId, artSetId, revision);
  const entry = await findEntry(deps.db, rev.id, entryPath);
  if (!entry || (entry.kind !== 'image' && entry.kind !== 'back-candidate')) throw notFound('That image');
  const key = `ws/${workspaceId}/thumbs/${entry.sha256}.webp`;
  if (!(await deps.storage.exists(key))) {
    const set = await openArtSet(zipPath);
    try {
      const buf = await sharp(await readEntry(set, entry.path), { limitInputPixels: 100_000_000 })
        .rotate()
        .resize(THUMB_PX, THUMB_PX, { fit: 'inside', withoutEnlargement: true })
        .webp({ quality: 80 })
        .toBuffer();
      await deps.storage.put(key, buf);
    } catch {
      throw new AppError(422, 'UNREADABLE', 'This image could not be read, so it has no thumbnail.');
    }
  }
  return key;
}

// A fixed time stamp so the same entries always make the same zip bytes (and dedupe works).
const ZIP_MTIME = new Date(Date.UTC(2020, 0, 1));

/**
 * A new revision from the latest one plus single images: a file with the same name replaces the
 * entry, a new name is added. The revision is one new zip (built with yazl) the engine reads as usual.
 */
export async function addFilesToArtSet(
  deps: ArtSetDeps,
  opts: { workspaceId: string; artSetId: string; userId: string | null; files: Array<{ name: string; tempFile: string }> },
): Promise<ImportResult> {
  const out = path.join(deps.tmpDir, `revision-${process.pid}-${Date.now()}-${Math.random().toString(36).slice(2)}.zip`);
  try {
    const { zipPath } = await revisionZip(deps, opts.workspaceId, opts.artSetId);
    const names = opts.files.map((f) => {
      let name: string;
      try {
        name = safeEntryName(f.name.replace(/^.*[\\/]/, ''));
      } catch (err) {
        if (err instanceof BleedwrightError) throw err;
        throw new BleedwrightError('ARCHIVE_PATH', `"${f.name}" is not a usable file name`);
      }
      if (!IMAGE_EXTENSIONS.includes(path.extname(name).toLowerCase())) {
        throw new AppError(400, 'NOT_AN_IMAGE', `"${name}" is not a PNG, JPEG, WebP or TIFF image.`);
      }
      return name;
    });
    const previous = await openArtSet(zipPath);
    const replaced = new Set(names);
    const zip = new yazl.ZipFile();
    const entries = previous.entries.filter((e) => !replaced.has(e.path)).map((e) => e.path);
    const all = [...entries.map((p) => ({ name: p, from: 'old' as const })), ...opts.files.map((f, i) => ({ name: names[i]!, from: f.tempFile }))];
    all.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    for (const item of all) {
      const data = item.from === 'old' ? await readEntry(previous, item.name) : item.from;
      if (Buffer.isBuffer(data)) zip.addBuffer(data, item.name, { mtime: ZIP_MTIME, mode: 0o100644 });
      else zip.addFile(data, item.name, { mtime: ZIP_MTIME, mode: 0o100644 });
    }
    zip.end();
    await mkdir(deps.tmpDir, { recursive: true });
    await new Promise<void>((resolve, reject) => {
      const stream = createWriteStream(out);
      stream.on('close', () => resolve());
      stream.on('error', reject);
      zip.outputStream.on('error', reject).pipe(stream);
    });
    const note = `Added or replaced: ${names.join(', ')}`.slice(0, 500);
    return await importArtSetZip(deps, { workspaceId: opts.workspaceId, userId: opts.userId, tempFile: out, artSetId: opts.artSetId, note });
  } finally {
    await rm(out, { force: true });
    for (const f of opts.files) await rm(f.tempFile, { force: true });
  }
}
