// Lengths and their conversions. Everything is converted to inches first, then to points (1/72 in,
// ISO 32000-1 8.3.2) or pixels at a DPI.
//
// Rounding rule (fixed, also in DEVELOPERS.md): the pixel size of a side is
// Math.round(length in inches x dpi), computed once on the whole page side (trim + 2 x bleed), never
// by adding separately rounded parts. Poker 63.5 x 88.9 mm with 1/8 in bleed at 300 DPI -> 825 x 1125;
// with 3 mm bleed (820.87 x 1120.87) -> 821 x 1121. The trim and bleed in pixels are derived from the
// same rule so the page always equals trim + 2 x bleed exactly (see recipeGeometry in recipe.ts).
export type LengthUnit = 'mm' | 'in';
export type Length = { size: number; unit: LengthUnit };

export const MM_PER_INCH = 25.4;
export const POINTS_PER_INCH = 72;

export function toInches(len: Length): number {
  return len.unit === 'in' ? len.size : len.size / MM_PER_INCH;
}

export function mmToInches(mm: number): number {
  return mm / MM_PER_INCH;
}

export function inchesToMm(inches: number): number {
  return inches * MM_PER_INCH;
}

export function inchesToPt(inches: number): number {
  return inches * POINTS_PER_INCH;
}

/** Whole pixels covering `inches` at `dpi`, by the rounding rule above. */
export function pxFor(inches: number, dpi: number): number {
  return Math.round(inches * dpi);
}

/** PNG pHYs value for a DPI: pixels per metre, rounded (PNG specification: 300 DPI -> 11811). */
export function pixelsPerMetre(dpi: number): number {
  return Math.round(dpi / 0.0254);
}

/** Points rounded to 1/1000 pt, enough for PDF boxes and free of float noise like 197.99999. */
export function roundPt(pt: number): number {
  return Math.round(pt * 1000) / 1000;
}
