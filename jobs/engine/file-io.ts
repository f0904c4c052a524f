// File I/O for the output writers (PDF, bundle), built for many large files in a row: whole files are
// read into one reused buffer, and output goes out through positioned writes on a file handle.
// Fresh Buffers per file (readFile, read streams) cost more than the copying itself: every new
// megabyte is page-faulted in and handed back, which showed as most of the PDF writer's time at 1,000 cards.
import { closeSync, openSync, readSync } from 'node:fs';
import { link, copyFile, open, rename, rm, type FileHandle } from 'node:fs/promises';

const GROW_STEP = 1024 * 1024;
const INITIAL_BYTES = 2 * GROW_STEP;

/**
 * Reads whole files into one buffer that is kept and grown as needed. The Buffer a read returns is a
 * view of that shared buffer: it is valid until the next read, so finish with it (await its writes) first.
 *
 * The read is synchronous, on purpose: it is for files just written and still in the page cache (card
 * renders), where it is a memory copy. Each call to libuv's thread pool wakes a sleeping thread and then
 * the event loop, and on the VMs measured here those two wake-ups cost more than copying a 1 MB card:
 * with open, read and close each through the pool, a rerun's 200-page PDF took ~370 ms (median of 12),
 * with them here ~210 ms. A file that must come from the disk blocks the event loop for that one read
 * (a few ms); the writes it feeds stay asynchronous. No size is asked for first: the buffer starts at
 * INITIAL_BYTES (a conformed card is about 1 MB) and a read that does not fill it is the end.
 */
export class ReusedReader {
  private buf = Buffer.alloc(0);

  readWhole(file: string, maxBytes = Infinity): Buffer {
    const fd = openSync(file, 'r');
    try {
      if (this.buf.length === 0) this.buf = Buffer.allocUnsafe(INITIAL_BYTES);
      let filled = 0;
      for (;;) {
        if (filled === this.buf.length) this.grow(filled + GROW_STEP, filled);
        const room = this.buf.length - filled;
        const bytesRead = readSync(fd, this.buf, filled, room, filled);
        filled += bytesRead;
        if (filled > maxBytes) throw new RangeError(`"${file}" is over the ${maxBytes}-byte limit`);
        // A regular file reads short only at its end.
        if (bytesRead < room) break;
      }
      return this.buf.subarray(0, filled);
    } finally {
      closeSync(fd);
    }
  }

  /** A larger buffer holding the first `keep` bytes of the current one. */
  private grow(bytes: number, keep: number): void {
    const bigger = Buffer.allocUnsafe(Math.ceil(bytes / GROW_STEP) * GROW_STEP);
    this.buf.copy(bigger, 0, 0, keep);
    this.buf = bigger;
  }
}

/**
 * Sequential output to one file through positioned writes. Small writes (PDF object headers, zip
 * headers) are gathered in a staging buffer; large ones go straight from the caller's Buffers, which
 * must stay unchanged until the returned promise settles. One call at a time: await each before the next.
 */
export class FileSink {
  private position = 0;
  private staged = 0;
  private readonly stage = Buffer.allocUnsafe(64 * 1024);
  // Writes started by `skip` and not awaited yet, and the first of them that failed.
  private inflight: Promise<void>[] = [];
  private failed: unknown = undefined;

  private constructor(
    private readonly fh: FileHandle,
    private readonly mirror: ByteMirror | null,
  ) {}

  /**
   * With `mirror`, every byte written also goes to it, in order, from the same Buffers (see ByteMirror).
   * A file already at `file` is written over, not emptied first, and cut to length by `close`: its
   * pages in the page cache are reused instead of new ones taken. On the VMs measured here, fresh page
   * cache was the slow part of writing outputs (~2 ms a MB against ~0.15 ms a MB written over), so an
   * assembly passes the last run's file in (see assembleOutputs).
   */
  static async create(file: string, mirror: ByteMirror | null = null): Promise<FileSink> {
    let fh: FileHandle;
    try {
      fh = await open(file, 'r+');
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'ENOENT') throw err;
      fh = await open(file, 'w');
    }
    return new FileSink(fh, mirror);
  }

  /** The open file, for positioned writes into a part of it this sink skips (see `skip`). */
  get handle(): FileHandle {
    return this.fh;
  }

  /** Bytes handed to the sink so far (the offset the next write lands at). */
  get offset(): number {
    return this.position + this.staged;
  }

  async write(data: Buffer): Promise<void> {
    if (this.staged + data.length <= this.stage.length) {
      data.copy(this.stage, this.staged);
      this.staged += data.length;
      return;
    }
    await this.writev([data]);
  }

  /**
   * Writes the buffers in order with as few system calls as the kernel allows. `crcs`, when given, holds
   * the CRC-32 of each buffer already known (or null), for the mirror (see ByteMirror).
   */
  async writev(buffers: readonly Buffer[], crcs?: ReadonlyArray<number | null>): Promise<void> {
    const staged = this.staged > 0;
    const list = staged ? [Buffer.from(this.stage.subarray(0, this.staged)), ...buffers] : [...buffers];
    this.staged = 0;
    const at = this.position;
    for (const b of list) this.position += b.length;
    if (this.mirror && list.length) await Promise.all([writevAll(this.fh, list, at), this.mirror.write(list, crcs && staged ? [null, ...crcs] : crcs)]);
    else await writevAll(this.fh, list, at);
  }

  /**
   * Leaves the next `bytes` bytes of the file to another writer (positioned writes on `handle`). The
   * bytes staged before the gap go out without waiting for them (many headers between placed entries
   * would otherwise wait on the disk one by one); `close` waits for them all.
   */
  async skip(bytes: number): Promise<void> {
    if (this.staged > 0) {
      const data = Buffer.from(this.stage.subarray(0, this.staged));
      const at = this.position;
      this.position += this.staged;
      this.staged = 0;
      const writing = writevAll(this.fh, [data], at);
      writing.catch((err: unknown) => (this.failed ??= err));
      this.inflight.push(writing);
      if (this.inflight.length >= 64) await this.drain();
    }
    this.position += bytes;
  }

  private async drain(): Promise<void> {
    const list = this.inflight;
    this.inflight = [];
    await Promise.allSettled(list);
    if (this.failed !== undefined) throw this.failed;
  }

  async close(): Promise<void> {
    try {
      await this.writev([]);
      await this.drain();
      // Whatever an older, longer file held past the end goes.
      await this.fh.truncate(this.offset);
    } finally {
      await this.fh.close();
    }
  }

  /** Closes without flushing (after a failure); the caller removes the file. */
  async abort(): Promise<void> {
    this.staged = 0;
    await Promise.allSettled(this.inflight);
    await this.fh.close().catch(() => undefined);
  }
}

/**
 * Receives a copy of every byte a FileSink writes, in order, as the same Buffers (keep none of them:
 * they may be reused once the returned promise settles). One call at a time.
 */
export interface ByteMirror {
  /** `crcs[i]`, when a number, is the CRC-32 of `buffers[i]` (it must be right): no pass over those bytes is needed. */
  write(buffers: readonly Buffer[], crcs?: ReadonlyArray<number | null>): Promise<void>;
}

/** Writes all of `buffers` at `position`: writev may write less than asked, so it goes on from where it stopped. */
export async function writevAll(fh: FileHandle, buffers: readonly Buffer[], position: number): Promise<void> {
  let total = 0;
  for (const b of buffers) total += b.length;
  let done = 0;
  while (done < total) {
    const { bytesWritten } = await fh.writev(skipBytes(buffers, done), position + done);
    if (bytesWritten === 0) throw new Error('the disk accepted no bytes');
    done += bytesWritten;
  }
}

function skipBytes(list: readonly Buffer[], skip: number): Buffer[] {
  if (skip === 0) return list as Buffer[];
  const out: Buffer[] = [];
  for (const b of list) {
    if (skip >= b.length) {
      skip -= b.length;
      continue;
    }
    out.push(skip > 0 ? b.subarray(skip) : b);
    skip = 0;
  }
  return out;
}

/**
 * Puts `source`'s bytes at `target` as a hard link (no data copied), or as a copy where links cannot be
 * made (another file system, or one without links). `target` is never half there: a link appears whole
 * in one step, so it is made straight at `target` when nothing is there yet (one call instead of three,
 * for each of a rerun's hundreds of singles); a file already there, or a copy, goes through a temp
 * name and a rename. Returns 'link' or 'copy'.
 */
export async function linkOrCopy(source: string, target: string): Promise<'link' | 'copy'> {
  let linkable = true;
  try {
    await link(source, target);
    return 'link';
  } catch (err) {
    if (cannotLink(err)) linkable = false;
    else if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
  }
  const tmp = `${target}.tmp`;
  await rm(tmp, { force: true });
  let how: 'link' | 'copy' = 'copy';
  try {
    if (linkable) {
      await link(source, tmp);
      how = 'link';
    }
  } catch (err) {
    if (!cannotLink(err)) throw err;
  }
  if (how === 'copy') await copyFile(source, tmp);
  await rename(tmp, target);
  return how;
}

/** The file system refuses a hard link here (another file system, or links not supported or too many). */
function cannotLink(err: unknown): boolean {
  const code = (err as NodeJS.ErrnoException).code;
  return code === 'EXDEV' || code === 'EPERM' || code === 'ENOTSUP' || code === 'EMLINK';
}
