// What the live preview draws, in millimetres, from recipe settings that may be half-typed: any
// value that is not a usable number gives null, and the preview says what to fix.
import { findPreset } from '../../../../shared/presets';
import { MM_PER_INCH, type LengthUnit } from '../../../../shared/units';
import type { RecipeInput } from '../../../../shared/recipe';

/** The settings the preview reads; a RecipeInput or a parsed Recipe both fit. */
export type PreviewSettings = Pick<RecipeInput, 'trim' | 'bleed' | 'safe' | 'fill' | 'turn' | 'fit' | 'dpi'>;

export type PreviewGeometry = {
  trimW: number;
  trimH: number;
  bleed: number;
  safe: number;
  pageW: number;
  pageH: number;
  presetLabel: string | null;
};

const toMm = (size: number, unit: LengthUnit) => (unit === 'in' ? size * MM_PER_INCH : size);
const usable = (n: unknown): n is number => typeof n === 'number' && Number.isFinite(n) && n >= 0;

export function previewGeometry(s: PreviewSettings): PreviewGeometry | null {
  let trimW: number;
  let trimH: number;
  let presetLabel: string | null = null;
  const trim = s.trim ?? 'poker';
  if (typeof trim === 'string') {
    const preset = findPreset(trim);
    if (!preset) return null;
    trimW = preset.width;
    trimH = preset.height;
    presetLabel = preset.label;
  } else {
    if (!usable(trim.width) || !usable(trim.height) || trim.width <= 0 || trim.height <= 0) return null;
    trimW = toMm(trim.width, trim.unit);
    trimH = toMm(trim.height, trim.unit);
  }
  const bleedLen = s.bleed ?? { size: 0.125, unit: 'in' as const };
  const safeLen = s.safe ?? { size: 0.125, unit: 'in' as const };
  if (!usable(bleedLen.size) || !usable(safeLen.size)) return null;
  const bleed = toMm(bleedLen.size, bleedLen.unit);
  const safe = toMm(safeLen.size, safeLen.unit);
  if (bleed >= Math.min(trimW, trimH) || 2 * safe >= Math.min(trimW, trimH)) return null;
  return { trimW, trimH, bleed, safe, pageW: trimW + 2 * bleed, pageH: trimH + 2 * bleed, presetLabel };
}

/** A length in the display unit: mm to 2 decimals, inches to 3 (1/8 in = 0.125). */
export function formatLength(mm: number, unit: LengthUnit): string {
  if (unit === 'in') return `${trimZeros((mm / MM_PER_INCH).toFixed(3))} in`;
  return `${trimZeros(mm.toFixed(2))} mm`;
}

function trimZeros(s: string): string {
  return s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s;
}

/** Converts a typed length between units, rounded to what the unit is usually written with. */
export function convertLength(size: number, from: LengthUnit, to: LengthUnit): number {
  if (from === to || !Number.isFinite(size)) return size;
  const mm = toMm(size, from);
  return to === 'mm' ? Math.round(mm * 100) / 100 : Math.round((mm / MM_PER_INCH) * 10000) / 10000;
}
