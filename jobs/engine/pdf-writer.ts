import { createHash } from 'node:crypto';
import { FileSink, type ByteMirror } from './file-io.ts';

/**
 * A minimal streaming PDF file writer (ISO 32000-1 7.5: header, body, xref table, trailer). Objects go
 * straight to the file as they are written; only their byte offsets stay in memory, so a document of
 * any length needs memory for one object at a time. Object numbers are handed out by `allocate()` and
 * every allocated number must be written before `finish()`.
 */
export class PdfStreamWriter {
  private sink: FileSink | null = null;
  private readonly offsets: number[] = [0];
  private position = 0;
  // Hash of every byte written: gives a file /ID that depends only on the content, so reruns match.
  private readonly digest = createHash('md5');

  /** With `mirror`, the file's bytes also go to it as they are written (e.g. into a bundle, see ZipTee). */
  constructor(
    private readonly filePath: string,
    private readonly mirror: ByteMirror | null = null,
  ) {}

  async start(): Promise<void> {
    this.sink = await FileSink.create(this.filePath, this.mirror);
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
   * then hashed from it instead of every data byte, which saves a pass over each card image. The
   * chunks are written straight from the caller's Buffers: keep them unchanged until this settles.
   * `chunkCrcs`, when given, are the chunks' CRC-32s, handed to the mirror (see ByteMirror).
   */
  async writeStream(num: number, dict: string, chunks: Buffer[], dataTag?: string, chunkCrcs?: readonly number[]): Promise<void> {
    const length = chunks.reduce((sum, c) => sum + c.length, 0);
    this.markOffset(num);
    const head = this.bytes(`${num} 0 obj\n<< ${dict} /Length ${length} >>\nstream\n`);
    const tail = this.bytes('\nendstream\nendobj\n');
    this.digest.update(head);
    if (dataTag === undefined) for (const c of chunks) this.digest.update(c);
    else this.digest.update(dataTag);
    this.digest.update(tail);
    this.position += head.length + length + tail.length;
    // The whole object goes out in one writev (a card's IDAT arrives in over a hundred chunks).
    await this.open().writev([head, ...chunks, tail], chunkCrcs ? [null, ...chunkCrcs, null] : undefined);
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
    await this.open().close();
    this.sink = null;
    return this.position;
  }

  /** Closes the file after a failure; the caller removes it. */
  async abort(): Promise<void> {
    await this.sink?.abort();
    this.sink = null;
  }

  private open(): FileSink {
    if (!this.sink) throw new Error('the PDF writer is not started (or already closed)');
    return this.sink;
  }

  private markOffset(num: number): void {
    if (num <= 0 || num >= this.offsets.length) throw new Error(`PDF object ${num} was never allocated`);
    if (this.offsets[num] >= 0) throw new Error(`PDF object ${num} written twice`);
    this.offsets[num] = this.position;
  }

  // latin1 keeps every char one byte, so offsets computed from lengths stay exact.
  private bytes(data: string | Buffer): Buffer {
    return typeof data === 'string' ? Buffer.from(data, 'latin1') : data;
  }

  private async write(data: string | Buffer): Promise<void> {
    const buf = this.bytes(data);
    this.position += buf.length;
    this.digest.update(buf);
    await this.open().write(buf);
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
