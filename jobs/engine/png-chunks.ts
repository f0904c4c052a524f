import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { crc32 } from 'node:zlib';
import { crc32Combine } from './crc32-combine.ts';
import type { ReusedReader } from './file-io.ts';
import { PdfEngineError } from './pdf-errors.ts';

/** The parts of a PNG a PDF image XObject needs: size and the zlib stream split over IDAT chunks. */
export type PngForPdf = {
  width: number;
  height: number;
  /** IDAT chunk payloads in file order; concatenated they are one zlib stream (PNG spec 10). */
  idat: Buffer[];
  idatBytes: number;
  /** The IDAT chunks' own CRC-32s in order: a cheap fingerprint of the image data. */
  idatCrcs: number[];
  /** CRC-32 of each IDAT payload alone (the chunk CRC also covers the type): what a zip of the data needs. */
  idatDataCrcs: number[];
  /** The whole file as read (a view of the reader's buffer when one is used). */
  file: Buffer;
};

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

/**
 * Reads one PNG for pass-through into a PDF. Only 8-bit RGB, non-interlaced PNGs are accepted: their
 * IDAT data is exactly a FlateDecode stream with PNG predictors (ISO 32000-1 7.4.4.4), so no pixel is
 * decoded or re-encoded. The conform step writes every card in this format.
 *
 * With `reader`, the file goes into the reader's reused buffer and the returned IDAT slices are views
 * of it: valid until the reader's next read.
 */
export async function readPngForPdf(pngPath: string, reader?: ReusedReader): Promise<PngForPdf> {
  const name = path.basename(pngPath);
  let file: Buffer;
  try {
    file = reader ? reader.readWhole(pngPath) : await readFile(pngPath);
  } catch (err) {
    throw new PdfEngineError('PDF_IMAGE_UNREADABLE', `card image "${name}" could not be read (${(err as Error).message}).`);
  }
  return parsePngForPdf(file, name);
}

export function parsePngForPdf(file: Buffer, name: string): PngForPdf {
  if (file.length < 8 || !file.subarray(0, 8).equals(PNG_SIGNATURE)) {
    throw new PdfEngineError('PDF_IMAGE_NOT_PNG', `card image "${name}" is not a PNG file.`);
  }
  let pos = 8;
  let width = 0;
  let height = 0;
  let sawHeader = false;
  let sawEnd = false;
  const idat: Buffer[] = [];
  const idatCrcs: number[] = [];
  const idatDataCrcs: number[] = [];
  let idatBytes = 0;
  while (pos < file.length) {
    if (pos + 12 > file.length) break;
    const length = file.readUInt32BE(pos);
    const type = file.toString('latin1', pos + 4, pos + 8);
    const dataStart = pos + 8;
    const dataEnd = dataStart + length;
    if (dataEnd + 4 > file.length) break;
    const storedCrc = file.readUInt32BE(dataEnd);
    // The chunk's CRC covers type and data (PNG spec 5.3): checked from the data's own CRC-32, which a
    // zip holding the PDF then takes as it is instead of hashing the data a second time.
    const dataCrc = crc32(file.subarray(dataStart, dataEnd));
    if (crc32Combine(crc32(file.subarray(pos + 4, dataStart)), dataCrc, length) !== storedCrc) {
      throw new PdfEngineError('PDF_IMAGE_CORRUPT', `card image "${name}" is damaged (checksum mismatch in its ${type} chunk); export it again.`);
    }
    const data = file.subarray(dataStart, dataEnd);
    if (!sawHeader) {
      if (type !== 'IHDR' || length !== 13) {
        throw new PdfEngineError('PDF_IMAGE_NOT_PNG', `card image "${name}" has no PNG header chunk.`);
      }
      width = data.readUInt32BE(0);
      height = data.readUInt32BE(4);
      const bitDepth = data[8];
      const colourType = data[9];
      const interlace = data[12];
      if (bitDepth !== 8 || colourType !== 2 || interlace !== 0 || data[10] !== 0 || data[11] !== 0) {
        throw new PdfEngineError(
          'PDF_IMAGE_FORMAT',
          `card image "${name}" must be an 8-bit RGB PNG without transparency or interlacing to go into the PDF ` +
            `(found bit depth ${bitDepth}, colour type ${colourType}, interlace ${interlace}).`,
        );
      }
      if (width === 0 || height === 0) {
        throw new PdfEngineError('PDF_IMAGE_FORMAT', `card image "${name}" has no pixels.`);
      }
      sawHeader = true;
    } else if (type === 'IDAT') {
      idat.push(data);
      idatCrcs.push(storedCrc);
      idatDataCrcs.push(dataCrc);
      idatBytes += length;
    } else if (type === 'IEND') {
      sawEnd = true;
      break;
    }
    pos = dataEnd + 4;
  }
  if (!sawHeader || !sawEnd || idatBytes === 0) {
    throw new PdfEngineError('PDF_IMAGE_TRUNCATED', `card image "${name}" is cut short (no image data or no end marker); export it again.`);
  }
  return { width, height, idat, idatBytes, idatCrcs, idatDataCrcs, file };
}
