// Test helpers: a tiny zip writer that can make the hostile archives yazl refuses to write
// (names with "..", absolute names, backslashes, lying sizes), and generated images.
import { crc32, deflateRawSync } from 'node:zlib';
import { spawnSync } from 'node:child_process';
import sharp from 'sharp';

export type ZipEntry = {
  name: string;
  data: Buffer;
  deflate?: boolean;
  /** Unix mode for the external attributes (e.g. 0o120777 for a symlink). */
  mode?: number;
  /** Uncompressed size written in the headers, when a test wants it to lie. */
  declaredSize?: number;
};

/** Builds a zip file (PKWARE APPNOTE 4.3: local headers, central directory, end record). */
export function makeZip(entries: readonly ZipEntry[]): Buffer {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  for (const e of entries) {
    const name = Buffer.from(e.name, 'utf8');
    const body = e.deflate ? deflateRawSync(e.data) : e.data;
    const size = e.declaredSize ?? e.data.length;
    const crc = crc32(e.data);
    const method = e.deflate ? 8 : 0;
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(0x800, 6);
    local.writeUInt16LE(method, 8);
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(body.length, 18);
    local.writeUInt32LE(size, 22);
    local.writeUInt16LE(name.length, 26);
    locals.push(local, name, body);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE((3 << 8) | 20, 4); // made by Unix
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(0x800, 8);
    central.writeUInt16LE(method, 10);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(body.length, 20);
    central.writeUInt32LE(size, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt32LE(((e.mode ?? 0o100644) << 16) >>> 0, 38);
    central.writeUInt32LE(offset, 42);
    centrals.push(central, name);
    offset += local.length + name.length + body.length;
  }
  const cd = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(entries.length, 8);
  end.writeUInt16LE(entries.length, 10);
  end.writeUInt32LE(cd.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, cd, end]);
}

/** A PNG of one colour. */
export function solidPng(w: number, h: number, color: string): Promise<Buffer> {
  return sharp({ create: { width: w, height: h, channels: 3, background: color } }).png().toBuffer();
}

/** Art from SVG markup (asymmetric shapes make turning and mirroring checkable). */
export function svgPng(w: number, h: number, body: string): Promise<Buffer> {
  return sharp(Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}">${body}</svg>`)).png().toBuffer();
}

export async function rawRgb(png: Buffer): Promise<{ data: Buffer; w: number; h: number; px: (x: number, y: number) => [number, number, number] }> {
  const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  const c = info.channels;
  return { data, w: info.width, h: info.height, px: (x, y) => [data[(y * info.width + x) * c]!, data[(y * info.width + x) * c + 1]!, data[(y * info.width + x) * c + 2]!] };
}

export function run(cmd: string, args: string[], opts: { cwd?: string } = {}): { status: number; stdout: string; stderr: string } {
  const r = spawnSync(cmd, args, { encoding: 'utf8', cwd: opts.cwd, maxBuffer: 64 * 1024 * 1024 });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

export function near(a: readonly number[], b: readonly number[], tol = 3): boolean {
  return a.every((v, i) => Math.abs(v - b[i]!) <= tol);
}
