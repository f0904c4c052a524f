// Preflight: findings from image facts and the recipe's geometry (DESIGN.md "Preflight findings").
// Pure code so the numbers can be tested without images; conform.ts gathers the facts.
import { PREFLIGHT_CONFIG, makeFinding, type Finding } from '../../shared/findings.ts';

export type FitMode = 'cover' | 'contain' | 'stretch';

/** How a source of `src` pixels lands in a target box of `target` pixels under a fit mode. */
export function fitScale(src: { w: number; h: number }, target: { w: number; h: number }, fit: FitMode): { x: number; y: number } {
  const sx = target.w / src.w;
  const sy = target.h / src.h;
  if (fit === 'stretch') return { x: sx, y: sy };
  const s = fit === 'cover' ? Math.max(sx, sy) : Math.min(sx, sy);
  return { x: s, y: s };
}

/**
 * Effective DPI: source pixels per inch of print after fitting. A source stretched more on one axis
 * counts by its worse axis.
 */
export function effectiveDpi(src: { w: number; h: number }, target: { w: number; h: number }, fit: FitMode, dpi: number): number {
  const s = fitScale(src, target, fit);
  return Math.round(dpi / Math.max(s.x, s.y));
}

/** Share (0..1) of the art cropped (cover), of the card padded (contain), or the distortion (stretch). */
export function aspectChange(src: { w: number; h: number }, target: { w: number; h: number }): { off: number; changed: number } {
  const ratio = src.w / src.h / (target.w / target.h);
  return { off: Math.abs(ratio - 1), changed: 1 - Math.min(ratio, 1 / ratio) };
}

/**
 * Decides whether art is trim-size or already includes bleed, from its proportions: art counts as
 * bleed art when it matches trim + bleed (within the aspect tolerance) better than the trim. Art that
 * matches neither is treated as trim art and fitted (ASPECT_MISMATCH says by how much).
 */
export function detectSourceKind(src: { w: number; h: number }, trimPx: { w: number; h: number }, pagePx: { w: number; h: number }): 'trim' | 'bleed' {
  const a = src.w / src.h;
  const toTrim = Math.abs(Math.log(a / (trimPx.w / trimPx.h)));
  const toPage = Math.abs(Math.log(a / (pagePx.w / pagePx.h)));
  return toPage < toTrim && toPage <= Math.log(1 + PREFLIGHT_CONFIG.aspectTolerance) ? 'bleed' : 'trim';
}

const pct = (share: number) => Math.round(share * 1000) / 10;

export type PreflightFacts = {
  /** Source pixels after EXIF orientation and turning. */
  src: { w: number; h: number };
  /** The box the art is fitted into (trim px, or page px for art with bleed). */
  target: { w: number; h: number };
  fit: FitMode;
  dpi: number;
  sourceKind: 'trim' | 'bleed';
  hadAlpha: boolean;
  /** What the input was converted from ("CMYK", "16-bit", "grayscale"), if anything. */
  convertedFrom: string[];
  frames: number;
  turn: 'clockwise' | 'counterclockwise' | 'none';
};

export function preflight(facts: PreflightFacts): Finding[] {
  const findings: Finding[] = [];
  const eff = effectiveDpi(facts.src, facts.target, facts.fit, facts.dpi);
  if (eff < facts.dpi * PREFLIGHT_CONFIG.veryLowDpiShare) {
    findings.push(makeFinding('VERY_LOW_DPI', { effectiveDpi: eff, targetDpi: facts.dpi }));
  } else if (eff < facts.dpi) {
    findings.push(makeFinding('LOW_DPI', { effectiveDpi: eff, targetDpi: facts.dpi }));
  }
  const aspect = aspectChange(facts.src, facts.target);
  if (aspect.off > PREFLIGHT_CONFIG.aspectTolerance) {
    const how = facts.fit === 'cover' ? 'cropped' : facts.fit === 'contain' ? 'padded' : 'stretched';
    findings.push(makeFinding('ASPECT_MISMATCH', { offPercent: pct(aspect.off), changedPercent: pct(aspect.changed) }, { how }));
  }
  if (facts.sourceKind === 'bleed') findings.push(makeFinding('HAS_BLEED'));
  if (facts.turn !== 'none') findings.push(makeFinding('TURNED', {}, { turn: facts.turn }));
  if (facts.hadAlpha) findings.push(makeFinding('TRANSPARENCY_FLATTENED'));
  if (facts.convertedFrom.length > 0) findings.push(makeFinding('COLOR_CONVERTED', {}, { from: facts.convertedFrom.join(', ') }));
  if (facts.frames > 1) findings.push(makeFinding('MULTI_FRAME', { frames: facts.frames }));
  return findings;
}

/** Adds DUPLICATE_PIXELS to every card whose decoded pixels equal an earlier card's. */
export function markDuplicates(cards: ReadonlyArray<{ path: string; sha256: string | null; findings: Finding[] }>): void {
  const first = new Map<string, string>();
  for (const card of cards) {
    if (!card.sha256) continue;
    const earlier = first.get(card.sha256);
    if (earlier) card.findings.push(makeFinding('DUPLICATE_PIXELS', {}, { other: `"${earlier}"` }));
    else first.set(card.sha256, card.path);
  }
}
