// A small streaming zip writer for bundles (PKWARE APPNOTE 6.3: local headers, central directory,
// end record; Zip64 records when a size or offset passes 4 GiB). It exists for speed: the CRC-32 of
// every file is taken with zlib's native crc32 (a bundle of 1,000 cards holds about 2 GB, which
// yazl's JavaScript CRC needed seconds for). Stored files are read once: copied out in large pieces
// through two reused buffers (one is read while the other is written) while their CRC is taken, which
// then follows in a data descriptor (APPNOTE 4.3.9); nothing is held in memory whole.
// One stored entry can be teed (ZipTee): its bytes are written into the zip by the task producing the
// file, at an offset worked out in advance, so a large file (the combined PDF) is never read back.
import { open, readFile, stat, type FileHandle } from 'node:fs/promises';
import { crc32, deflateRawSync } from 'node:zlib';
import { crc32Combine } from './crc32-combine.ts';
import { FileSink, writevAll, type ByteMirror } from './file-io.ts';

export type ZipFileEntry = {
  /** Path of the file on disk. */
  file: string;
  /** Name inside the zip (forward slashes). */
  name: string;
  /** Deflate the data (small text files); otherwise stored as-is (PNG, JPEG, PDF are compressed already). */
  compress: boolean;
  /** Settles when `file` is complete (a file still being written by another task); awaited before it is read. */
  ready?: Promise<unknown>;
  /** The file's bytes arrive through this tee while it is written (stored entries only; at most one per zip). */
  tee?: ZipTee;
};

/**
 * Puts a file's bytes into the zip while another task writes the file: give it as that writer's
 * ByteMirror and as the entry's `tee`. writeZip places it when every entry before it is a stored file
 * that already exists (their sizes then fix where its data starts); otherwise, or when the file turns
 * out to need Zip64 sizes, the tee drops the bytes and writeZip copies the finished file as usual.
 * The zip's bytes are the same either way.
 */
export class ZipTee implements ByteMirror {
  crc = 0;
  size = 0;
  private target: { fh: FileHandle; at: number } | null = null;
  private dropped = false;
  private settle!: (placed: boolean) => void;
  private readonly placed = new Promise<boolean>((resolve) => (this.settle = resolve));

  /** Called by writeZip: the data starts at byte `at` of the zip open on `fh`; null drops the bytes. */
  place(target: { fh: FileHandle; at: number } | null): void {
    this.target = target;
    this.settle(target !== null);
  }

  /** Drops whatever comes next (the zip failed or was closed). */
  drop(): void {
    this.dropped = true;
    this.settle(false);
  }

  /** True when every byte so far went into the zip. */
  get complete(): boolean {
    return this.target !== null && !this.dropped;
  }

  async write(buffers: readonly Buffer[], crcs?: ReadonlyArray<number | null>): Promise<void> {
    if (!(await this.placed) || this.dropped || !this.target) return;
    const at = this.target.at + this.size;
    this.crc = addCrcs(this.crc, buffers, crcs);
    for (const b of buffers) this.size += b.length;
    await writevAll(this.target.fh, buffers, at);
  }
}

/** A ByteMirror that keeps only the CRC-32 and size of what is written: a composed zip's entry (composeZip). */
export class CrcMirror implements ByteMirror {
  crc = 0;
  size = 0;

  async write(buffers: readonly Buffer[], crcs?: ReadonlyArray<number | null>): Promise<void> {
    this.crc = addCrcs(this.crc, buffers, crcs);
    for (const b of buffers) this.size += b.length;
  }
}

/** `crc` carried on over `buffers`, combining the CRC-32s already known instead of reading those bytes. */
function addCrcs(crc: number, buffers: readonly Buffer[], crcs?: ReadonlyArray<number | null>): number {
  buffers.forEach((b, i) => {
    const known = crcs?.[i];
    crc = typeof known === 'number' ? crc32Combine(crc, known, b.length) : crc32(b, crc);
  });
  return crc;
}

const U32 = 0xffffffff;
const U16 = 0xffff;
const UTF8_FLAG = 0x800;
const DESCRIPTOR_FLAG = 0x8;
const MADE_BY_UNIX = (3 << 8) | 45;
const MODE_FILE = 0o100644;
const COPY_CHUNK = 4 * 1024 * 1024;

/** DOS date and time fields of a fixed moment, so the same files always make the same bytes. */
function dosDateTime(d: Date): { date: number; time: number } {
  return {
    date: ((d.getUTCFullYear() - 1980) << 9) | ((d.getUTCMonth() + 1) << 5) | d.getUTCDate(),
    time: (d.getUTCHours() << 11) | (d.getUTCMinutes() << 5) | Math.floor(d.getUTCSeconds() / 2),
  };
}

type Written = { name: Buffer; crc: number; size: number; compressedSize: number; offset: number; method: number; descriptor: boolean };

/**
 * Puts the data of stored entries into the zip from Buffers another task holds anyway (the PDF writer
 * reads every card PNG whole): pass it to writeZip with `done`, the promise of that task; call `put`
 * with each file's whole bytes. writeZip places the stored entries whose sizes fix their offsets (the
 * leading run of existing stored files), waits for `done` at the first of them not put yet, and copies
 * any that were not put as usual. The zip's bytes are the same either way.
 */
export class ZipPlacer {
  /** CRC-32 and size of every entry (by index) whose data is in place. */
  readonly placed = new Map<number, number>();
  private spots: { fh: FileHandle; byFile: Map<string, Array<{ index: number; at: number; size: number }>> } | null = null;
  private dropped = false;
  private settle!: () => void;
  private readonly known = new Promise<void>((resolve) => (this.settle = resolve));

  constructor(readonly done: Promise<unknown>) {
    // Its failure is the writer's to report; writeZip only waits on it.
    done.catch(() => undefined);
  }

  /** Called by writeZip once the offsets are known. */
  place(spots: { fh: FileHandle; byFile: Map<string, Array<{ index: number; at: number; size: number }>> }): void {
    this.spots = spots;
    this.settle();
  }

  /** Puts nothing from now on (the zip failed or was closed). */
  drop(): void {
    this.dropped = true;
    this.settle();
  }

  /**
   * Writes `data` (the whole of `file`) wherever the zip holds that file; a no-op for other files.
   * `knownCrc`: the CRC-32 of `data` when the caller has it already (it must be right: it goes into the zip as it is).
   */
  async put(file: string, data: Buffer, knownCrc?: number): Promise<void> {
    await this.known;
    const spots = this.spots?.byFile.get(file)?.filter((s) => s.size === data.length && !this.placed.has(s.index));
    if (!this.spots || this.dropped || !spots?.length) return;
    const crc = knownCrc ?? crc32(data);
    const { fh } = this.spots;
    await Promise.all(spots.map((s) => writevAll(fh, [data], s.at)));
    if (!this.dropped) for (const s of spots) this.placed.set(s.index, crc);
  }
}

/** Bytes a stored entry with a data descriptor takes in the zip: local header, data, descriptor. */
function storedSpan(name: Buffer, size: number): number {
  const zip64 = size >= U32;
  return 30 + name.length + (zip64 ? 20 : 0) + size + (zip64 ? 24 : 16);
}

/** With a data descriptor, CRC and sizes are 0 here (APPNOTE 4.4.4); a Zip64 entry says so with its extra field. */
function localHeader(e: Written, stamp: { date: number; time: number }): Buffer {
  const zip64 = e.size >= U32 || e.compressedSize >= U32;
  const extra = zip64 ? Buffer.alloc(20) : Buffer.alloc(0);
  if (zip64) {
    extra.writeUInt16LE(0x0001, 0);
    extra.writeUInt16LE(16, 2);
    if (!e.descriptor) {
      extra.writeBigUInt64LE(BigInt(e.size), 4);
      extra.writeBigUInt64LE(BigInt(e.compressedSize), 12);
    }
  }
  const known = !e.descriptor;
  const h = Buffer.alloc(30);
  h.writeUInt32LE(0x04034b50, 0);
  h.writeUInt16LE(zip64 ? 45 : 20, 4);
  h.writeUInt16LE(UTF8_FLAG | (e.descriptor ? DESCRIPTOR_FLAG : 0), 6);
  h.writeUInt16LE(e.method, 8);
  h.writeUInt16LE(stamp.time, 10);
  h.writeUInt16LE(stamp.date, 12);
  h.writeUInt32LE(known ? e.crc : 0, 14);
  h.writeUInt32LE(zip64 ? U32 : known ? e.compressedSize : 0, 18);
  h.writeUInt32LE(zip64 ? U32 : known ? e.size : 0, 22);
  h.writeUInt16LE(e.name.length, 26);
  h.writeUInt16LE(extra.length, 28);
  return Buffer.concat([h, e.name, extra]);
}

/** Data descriptor after the data: 8-byte sizes for a Zip64 entry (APPNOTE 4.3.9.2). */
function dataDescriptor(e: Written): Buffer {
  const zip64 = e.size >= U32 || e.compressedSize >= U32;
  const d = Buffer.alloc(zip64 ? 24 : 16);
  d.writeUInt32LE(0x08074b50, 0);
  d.writeUInt32LE(e.crc, 4);
  if (zip64) {
    d.writeBigUInt64LE(BigInt(e.compressedSize), 8);
    d.writeBigUInt64LE(BigInt(e.size), 16);
  } else {
    d.writeUInt32LE(e.compressedSize, 8);
    d.writeUInt32LE(e.size, 12);
  }
  return d;
}

function centralHeader(e: Written, stamp: { date: number; time: number }): Buffer {
  // Zip64 extra field: only the values that do not fit, in this order (APPNOTE 4.5.3).
  const big: bigint[] = [];
  if (e.size >= U32) big.push(BigInt(e.size));
  if (e.compressedSize >= U32) big.push(BigInt(e.compressedSize));
  if (e.offset >= U32) big.push(BigInt(e.offset));
  const extra = big.length ? Buffer.alloc(4 + 8 * big.length) : Buffer.alloc(0);
  if (big.length) {
    extra.writeUInt16LE(0x0001, 0);
    extra.writeUInt16LE(8 * big.length, 2);
    big.forEach((v, i) => extra.writeBigUInt64LE(v, 4 + 8 * i));
  }
  const h = Buffer.alloc(46);
  h.writeUInt32LE(0x02014b50, 0);
  h.writeUInt16LE(MADE_BY_UNIX, 4);
  h.writeUInt16LE(big.length ? 45 : 20, 6);
  h.writeUInt16LE(UTF8_FLAG | (e.descriptor ? DESCRIPTOR_FLAG : 0), 8);
  h.writeUInt16LE(e.method, 10);
  h.writeUInt16LE(stamp.time, 12);
  h.writeUInt16LE(stamp.date, 14);
  h.writeUInt32LE(e.crc, 16);
  h.writeUInt32LE(e.compressedSize >= U32 ? U32 : e.compressedSize, 20);
  h.writeUInt32LE(e.size >= U32 ? U32 : e.size, 24);
  h.writeUInt16LE(e.name.length, 28);
  h.writeUInt16LE(extra.length, 30);
  h.writeUInt32LE((MODE_FILE << 16) >>> 0, 38);
  h.writeUInt32LE(e.offset >= U32 ? U32 : e.offset, 42);
  return Buffer.concat([h, e.name, extra]);
}

function endRecords(count: number, cdOffset: number, cdSize: number): Buffer {
  const parts: Buffer[] = [];
  const zip64 = count >= U16 || cdOffset >= U32 || cdSize >= U32;
  if (zip64) {
    const rec = Buffer.alloc(56);
    rec.writeUInt32LE(0x06064b50, 0);
    rec.writeBigUInt64LE(44n, 4);
    rec.writeUInt16LE(MADE_BY_UNIX, 12);
    rec.writeUInt16LE(45, 14);
    rec.writeBigUInt64LE(BigInt(count), 24);
    rec.writeBigUInt64LE(BigInt(count), 32);
    rec.writeBigUInt64LE(BigInt(cdSize), 40);
    rec.writeBigUInt64LE(BigInt(cdOffset), 48);
    const locator = Buffer.alloc(20);
    locator.writeUInt32LE(0x07064b50, 0);
    locator.writeBigUInt64LE(BigInt(cdOffset + cdSize), 8);
    locator.writeUInt32LE(1, 16);
    parts.push(rec, locator);
  }
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(Math.min(count, U16), 8);
  end.writeUInt16LE(Math.min(count, U16), 10);
  end.writeUInt32LE(Math.min(cdSize, U32), 12);
  end.writeUInt32LE(Math.min(cdOffset, U32), 16);
  parts.push(end);
  return Buffer.concat(parts);
}

/** Writes `entries` in order into a zip at `target`; every entry gets the time stamp `mtime`. */
export async function writeZip(target: string, entries: readonly ZipFileEntry[], mtime: Date, placer: ZipPlacer | null = null): Promise<void> {
  const stamp = dosDateTime(mtime);
  const tees = entries.filter((e) => e.tee);
  if (tees.length > 1) throw new Error('a zip takes at most one teed entry');
  const teeIndex = entries.findIndex((e) => e.tee);
  const tee = teeIndex >= 0 ? entries[teeIndex]!.tee! : null;
  let out: FileSink;
  try {
    out = await FileSink.create(target);
  } catch (err) {
    tee?.drop();
    placer?.drop();
    throw err;
  }
  const written: Written[] = [];
  // Two copy buffers, allocated once for the whole zip: one is filled while the other is written.
  const buffers = [Buffer.allocUnsafe(COPY_CHUNK), Buffer.allocUnsafe(COPY_CHUNK)] as const;
  // Where the teed entry's local header goes, when the entries before it allow placing it now.
  let teeOffset = -1;
  // Offsets of the leading run of stored files that exist already: their sizes fix where each goes.
  const layout: number[] = [];
  let sizes: number[] = [];
  try {
    let known = 0;
    while (known < entries.length && !entries[known]!.compress && entries[known]!.ready === undefined) known++;
    if (placer || (tee && teeIndex <= known)) {
      sizes = await Promise.all(entries.slice(0, known).map(async (e) => (await stat(e.file)).size));
      let at = 0;
      const byFile = new Map<string, Array<{ index: number; at: number; size: number }>>();
      for (let i = 0; i < known; i++) {
        const name = Buffer.from(entries[i]!.name, 'utf8');
        layout.push(at);
        if (sizes[i]! < U32) {
          const dataAt = at + localHeader({ name, crc: 0, size: sizes[i]!, compressedSize: sizes[i]!, offset: at, method: 0, descriptor: true }, stamp).length;
          byFile.set(entries[i]!.file, [...(byFile.get(entries[i]!.file) ?? []), { index: i, at: dataAt, size: sizes[i]! }]);
        }
        at += storedSpan(name, sizes[i]!);
      }
      placer?.place({ fh: out.handle, byFile });
      if (tee && teeIndex <= known) {
        teeOffset = at;
        const header = localHeader({ name: Buffer.from(entries[teeIndex]!.name, 'utf8'), crc: 0, size: 0, compressedSize: 0, offset: teeOffset, method: 0, descriptor: true }, stamp);
        tee.place({ fh: out.handle, at: teeOffset + header.length });
      }
    }
    if (tee && teeOffset < 0) tee.place(null);
    if (placer && layout.length === 0) placer.drop();
    for (const [index, entry] of entries.entries()) {
      await entry.ready;
      const name = Buffer.from(entry.name, 'utf8');
      const offset = out.offset;
      if (placer && index < layout.length && !placer.placed.has(index)) await placer.done;
      const placedCrc = placer && offset === layout[index] ? placer.placed.get(index) : undefined;
      // Data put in place already by a ZipPlacer or a ZipTee: its CRC-32 and size.
      const inPlace =
        placedCrc !== undefined
          ? { crc: placedCrc, size: sizes[index]! }
          : entry.tee && entry.tee.complete && offset === teeOffset && entry.tee.size < U32 && (await stat(entry.file)).size === entry.tee.size
            ? { crc: entry.tee.crc, size: entry.tee.size }
            : null;
      if (inPlace) {
        // Header, skip the data, descriptor.
        const e = { name, crc: inPlace.crc, size: inPlace.size, compressedSize: inPlace.size, offset, method: 0, descriptor: true };
        await out.write(localHeader(e, stamp));
        await out.skip(e.size);
        await out.write(dataDescriptor(e));
        written.push(e);
      } else if (entry.compress) {
        const data = await readFile(entry.file);
        const deflated = deflateRawSync(data);
        const e = { name, crc: crc32(data), size: data.length, compressedSize: deflated.length, offset, method: 8, descriptor: false };
        await out.write(localHeader(e, stamp));
        await out.writev([deflated]);
        written.push(e);
      } else {
        const fh = await open(entry.file, 'r');
        try {
          // The size (from stat) decides up front whether the entry needs Zip64 records.
          const { size } = await fh.stat();
          const e = { name, crc: 0, size, compressedSize: size, offset, method: 0, descriptor: true };
          await out.write(localHeader(e, stamp));
          let copied = 0;
          let pending: Promise<void> = Promise.resolve();
          for (let turn = 0; ; turn++) {
            const buf = buffers[turn % 2]!;
            // Reads this piece while the previous one is written; both done before either buffer is reused.
            const [{ bytesRead }] = await Promise.all([fh.read(buf, 0, buf.length, copied), pending]);
            if (bytesRead === 0) break;
            const piece = buf.subarray(0, bytesRead);
            copied += bytesRead;
            e.crc = crc32(piece, e.crc);
            pending = out.writev([piece]);
          }
          if (copied !== size) throw new Error(`"${entry.name}" changed size while it was being zipped`);
          await out.write(dataDescriptor(e));
          written.push(e);
        } finally {
          await fh.close();
        }
      }
    }
    const cdOffset = out.offset;
    for (const e of written) await out.write(centralHeader(e, stamp));
    await out.write(endRecords(written.length, cdOffset, out.offset - cdOffset));
    await out.close();
  } catch (err) {
    tee?.drop();
    placer?.drop();
    await out.abort();
    throw err;
  }
}

/** A stored entry of a composed zip: its size and CRC-32 known up front, its data held elsewhere (`source`). */
export type ZipPart<T> = { name: string; size: number; crc: number; source: T };

/** A composed zip, in order: header bytes made here, and the data of each part. */
export type ZipSegment<T> = { bytes: Buffer } | { source: T; size: number };

/**
 * Lays out a zip of stored entries whose sizes and CRC-32s are known without writing it: the same
 * records as writeZip (APPNOTE 6.3), with sizes and CRC in the local headers instead of data
 * descriptors (4.4.4). The bytes come out the same every time for the same parts, so a download can
 * stream them, in whole or in a byte range, from where the parts are kept.
 */
export function composeZip<T>(parts: ReadonlyArray<ZipPart<T>>, mtime: Date): { segments: Array<ZipSegment<T>>; size: number } {
  const stamp = dosDateTime(mtime);
  const segments: Array<ZipSegment<T>> = [];
  const written: Written[] = [];
  let at = 0;
  for (const part of parts) {
    const e: Written = { name: Buffer.from(part.name, 'utf8'), crc: part.crc, size: part.size, compressedSize: part.size, offset: at, method: 0, descriptor: false };
    const header = localHeader(e, stamp);
    segments.push({ bytes: header }, { source: part.source, size: part.size });
    at += header.length + part.size;
    written.push(e);
  }
  const central = Buffer.concat(written.map((e) => centralHeader(e, stamp)));
  const tail = Buffer.concat([central, endRecords(written.length, at, central.length)]);
  segments.push({ bytes: tail });
  return { segments, size: at + tail.length };
}
