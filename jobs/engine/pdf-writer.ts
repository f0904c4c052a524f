import { createHash } from 'node:crypto';
import { createWriteStream, type WriteStream } from 'node:fs';
import { once } from 'node:events';

/**
 * A minimal streaming PDF file writer (ISO 32000-1 7.5: header, body, xref table, trailer). Objects go
 * straight to the file as they are written; only their byte offsets stay in memory, so a document of
 * any length needs memory for one object at a time. Object numbers are handed out by `allocate()` and
 * every allocated number must be written before `finish()`.
 */
export class PdfStreamWriter {
  private readonly out: WriteStream;
  private readonly offsets: number[] = [0];
  private position = 0;
  // Hash of every byte written: gives a file /ID that depends only on the content, so reruns match.
  private readonly digest = createHash('md5');
  private failure: Error | null = null;

  constructor(filePath: string) {
    // A large buffer lets a whole card image go out in one write instead of waiting on every 16 KiB.
    this.out = createWriteStream(filePath, { highWaterMark: 4 * 1024 * 1024 });
    this.out.on('error', (err) => {
      this.failure = err;
    });
  }

  async start(): Promise<void> {
    // The comment line with bytes above 127 tells transfer tools the file is binary (7.5.2).
    await this.write(Buffer.concat([Buffer.from('%PDF-1.4\n%'), Buffer.from([0xe2, 0xe3, 0xcf, 0xd3]), Buffer.from('\n')]));
  }

  allocate(): number {
    this.offsets.push(-1);
    return this.offsets.length - 1;
  }

  get bytesWritten(): number {
    return this.position;
  }

  async writeObject(num: number, body: string): Promise<void> {
    this.markOffset(num);
    await this.write(`${num} 0 obj\n${body}\nendobj\n`);
  }

  /**
   * Writes a stream object; `dict` holds the entries other than /Length, which is set from the chunks.
   * `dataTag`, when given, must identify the chunks' content (e.g. the PNG chunk CRCs): the file /ID is
   * then hashed from it instead of every data byte, which saves a pass over each card image.
   */
  async writeStream(num: number, dict: string, chunks: Buffer[], dataTag?: string): Promise<void> {
    const length = chunks.reduce((sum, c) => sum + c.length, 0);
    this.markOffset(num);
    // The whole object goes out as one batch (a card's IDAT arrives in dozens of chunks), and stream
    // data is not fed to the /ID hash byte by byte: `dataTag`, when given, stands for it (see below).
    await this.write(`${num} 0 obj\n<< ${dict} /Length ${length} >>\nstream\n`);
    await this.writeBatch(chunks, dataTag);
    await this.write('\nendstream\nendobj\n');
  }

  /** Writes the xref table and trailer, then closes the file. Returns the file size in bytes. */
  async finish(rootNum: number, infoNum: number): Promise<number> {
    const missing = this.offsets.findIndex((o, i) => i > 0 && o < 0);
    if (missing > 0) throw new Error(`PDF object ${missing} was allocated but never written`);
    const xrefOffset = this.position;
    const fileId = this.digest.copy().digest('hex').toUpperCase();
    // Each xref entry is exactly 20 bytes: 10-digit offset, space, 5-digit generation, space, n/f, space, LF.
    const lines = [`xref\n0 ${this.offsets.length}\n`, '0000000000 65535 f \n'];
    for (let i = 1; i < this.offsets.length; i++) lines.push(`${String(this.offsets[i]).padStart(10, '0')} 00000 n \n`);
    await this.write(lines.join(''));
    await this.write(
      `trailer\n<< /Size ${this.offsets.length} /Root ${rootNum} 0 R /Info ${infoNum} 0 R /ID [<${fileId}> <${fileId}>] >>\n` +
        `startxref\n${xrefOffset}\n%%EOF\n`,
    );
    this.out.end();
    await once(this.out, 'finish');
    if (this.failure) throw this.failure;
    return this.position;
  }

  /** Closes the file after a failure; the caller removes it. */
  async abort(): Promise<void> {
    if (this.out.closed) return;
    this.out.destroy();
    await once(this.out, 'close').catch(() => undefined);
  }

  private markOffset(num: number): void {
    if (num <= 0 || num >= this.offsets.length) throw new Error(`PDF object ${num} was never allocated`);
    if (this.offsets[num] >= 0) throw new Error(`PDF object ${num} written twice`);
    this.offsets[num] = this.position;
  }

  private async writeBatch(chunks: readonly Buffer[], dataTag: string | undefined): Promise<void> {
    if (this.failure) throw this.failure;
    if (dataTag === undefined) for (const c of chunks) this.digest.update(c);
    else this.digest.update(dataTag);
    let ok = true;
    this.out.cork();
    for (const c of chunks) {
      this.position += c.length;
      ok = this.out.write(c);
    }
    this.out.uncork();
    if (!ok) await this.drained();
  }

  private drained(): Promise<void> {
    return new Promise<void>((resolve, reject) => {
      const done = () => {
        this.out.off('drain', done);
        this.out.off('error', done);
        if (this.failure) reject(this.failure);
        else resolve();
      };
      this.out.on('drain', done);
      this.out.on('error', done);
    });
  }

  private async write(data: string | Buffer): Promise<void> {
    if (this.failure) throw this.failure;
    // latin1 keeps every char one byte, so offsets computed from lengths stay exact.
    const buf = typeof data === 'string' ? Buffer.from(data, 'latin1') : data;
    this.position += buf.length;
    this.digest.update(buf);
    if (!this.out.write(buf)) await this.drained();
  }
}

/** PDF number: at most 4 decimals, no exponent, no trailing zeros (7.3.3). */
export function pdfNum(n: number): string {
  if (!Number.isFinite(n)) throw new Error(`not a finite number: ${n}`);
  const s = (Math.round(n * 10000) / 10000).toFixed(4).replace(/\.?0+$/, '');
  return s === '-0' ? '0' : s;
}

/** A PDF text string as UTF-16BE with byte order mark, hex-encoded, so any title survives (7.9.2.2). */
export function pdfTextString(text: string): string {
  const units: string[] = ['FEFF'];
  for (let i = 0; i < text.length; i++) units.push(text.charCodeAt(i).toString(16).toUpperCase().padStart(4, '0'));
  return `<${units.join('')}>`;
}
