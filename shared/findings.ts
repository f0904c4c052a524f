// Preflight finding codes as data (DESIGN.md "Preflight findings"): default severity and a message
// template whose {placeholders} are filled from the finding's numbers or text values.
export type Severity = 'info' | 'warn' | 'error';

export type Finding = {
  code: FindingCode;
  severity: Severity;
  message: string;
  numbers: Record<string, number>;
};

/** Thresholds in one place, not inline (DESIGN.md: 2/3 of the DPI, 1% proportions). */
export const PREFLIGHT_CONFIG = {
  /** Below this share of the recipe DPI the card "will look soft". */
  veryLowDpiShare: 2 / 3,
  /** Proportions off by more than this share are reported. */
  aspectTolerance: 0.01,
  /** Largest difference per channel (0-255) still counted as "one colour" for fill auto. */
  solidRingTolerance: 8,
  /** Refuse to decode images bigger than this (checked from the header first). */
  maxInputPixels: 100_000_000,
} as const;

export const FINDING_CODES = {
  LOW_DPI: { severity: 'warn', template: 'Effective resolution {effectiveDpi} DPI is below the {targetDpi} DPI asked for.' },
  VERY_LOW_DPI: {
    severity: 'warn',
    template: 'Effective resolution {effectiveDpi} DPI is under two thirds of {targetDpi} DPI: it will look soft in print.',
  },
  ASPECT_MISMATCH: { severity: 'warn', template: 'Proportions differ from the card by {offPercent}%: {changedPercent}% of the art is {how}.' },
  HAS_BLEED: { severity: 'info', template: 'The art already includes bleed; it was scaled to the full page.' },
  TRANSPARENCY_FLATTENED: { severity: 'info', template: 'Transparent areas were flattened onto the fill colour.' },
  COLOR_CONVERTED: { severity: 'info', template: 'Converted from {from} to 8-bit sRGB.' },
  DUPLICATE_PIXELS: { severity: 'info', template: 'Same pixels as {other}.' },
  TURNED: { severity: 'info', template: 'Landscape art turned {turn} to match the card.' },
  MULTI_FRAME: { severity: 'info', template: 'The file has {frames} frames or pages; only the first was used.' },
  UNREADABLE: { severity: 'error', template: 'The image could not be read: {reason}.' },
  NOT_AN_IMAGE: { severity: 'error', template: 'This file is not a PNG, JPEG, WebP or TIFF image.' },
  TRUNCATED: { severity: 'error', template: 'The image file is cut short or damaged: {reason}.' },
  TOO_MANY_PIXELS: { severity: 'error', template: 'The image is {megapixels} megapixels, over the limit of {limitMegapixels}.' },
  EXTENSION_MISMATCH: { severity: 'error', template: 'The file is named .{ext} but is really {format}.' },
} as const satisfies Record<string, { severity: Severity; template: string }>;

export type FindingCode = keyof typeof FINDING_CODES;

/** Builds a finding from its code; numbers fill {placeholders}, `text` fills the rest. */
export function makeFinding(code: FindingCode, numbers: Record<string, number> = {}, text: Record<string, string> = {}): Finding {
  const def = FINDING_CODES[code];
  const message = def.template.replace(/\{(\w+)\}/g, (whole, key: string) => {
    if (key in numbers) return String(numbers[key]);
    if (key in text) return text[key]!;
    return whole;
  });
  return { code, severity: def.severity, message, numbers };
}

export function worstSeverity(findings: readonly Finding[]): Severity | null {
  if (findings.some((f) => f.severity === 'error')) return 'error';
  if (findings.some((f) => f.severity === 'warn')) return 'warn';
  return findings.length > 0 ? 'info' : null;
}
