import { PDFDocument, PDFRawStream, type PDFRef } from 'pdf-lib';
import { readPngForPdf } from './png-chunks.ts';

/**
 * Adds an 8-bit RGB PNG to a pdf-lib document as an image XObject whose data is the PNG's own IDAT
 * stream (FlateDecode with PNG predictors, ISO 32000-1 7.4.4.4). pdf-lib's `embedPng` would decode and
 * re-deflate every card in JavaScript (~200 ms for an 825 x 1125 card); this copies bytes and is lossless.
 */
export async function embedPngPassThrough(doc: PDFDocument, pngPath: string): Promise<PDFRef> {
  const png = await readPngForPdf(pngPath);
  const dict = doc.context.obj({
    Type: 'XObject',
    Subtype: 'Image',
    Width: png.width,
    Height: png.height,
    ColorSpace: 'DeviceRGB',
    BitsPerComponent: 8,
    Filter: 'FlateDecode',
    DecodeParms: { Predictor: 15, Colors: 3, BitsPerComponent: 8, Columns: png.width },
  });
  return doc.context.register(PDFRawStream.of(dict, Buffer.concat(png.idat, png.idatBytes)));
}
