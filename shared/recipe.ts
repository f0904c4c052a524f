// The one recipe schema (DESIGN.md "Recipe"), used by the API, the UI forms, the CLI and the workers.
// Pure zod and arithmetic: no I/O here.
import { z } from 'zod';
import { BleedwrightError } from './errors.ts';
import { TRIM_PRESET_NAMES, findPreset } from './presets.ts';
import { inchesToPt, mmToInches, pxFor, roundPt, toInches, type Length } from './units.ts';

/** Largest trim side accepted, in millimetres: bigger than any card, small enough to catch typos. */
export const MAX_TRIM_MM = 500;
export const MIN_DPI = 72;
export const MAX_DPI = 1200;
/** Most copies of one card a manifest or recipe may ask for. */
export const MAX_COPIES = 1000;

const unitSchema = z.enum(['mm', 'in'], { error: 'must be "mm" or "in"' });

const lengthSchema = z.strictObject({
  size: z.number({ error: 'must be a number' }).min(0, 'must be 0 or more'),
  unit: unitSchema,
});

const trimObjectSchema = z.strictObject({
  width: z.number({ error: 'must be a number' }).positive('must be more than 0'),
  height: z.number({ error: 'must be a number' }).positive('must be more than 0'),
  unit: unitSchema,
});

const colorSchema = z
  .string({ error: 'must be a colour like "#1a2b3c"' })
  .regex(/^#[0-9a-fA-F]{6}$/, 'must be a colour like "#1a2b3c"');

const turnSchema = z.enum(['clockwise', 'counterclockwise', 'keep'], {
  error: 'must be "clockwise", "counterclockwise" or "keep"',
});

export const fillSchema = z.discriminatedUnion(
  'mode',
  [
    z.strictObject({ mode: z.literal('solid'), color: colorSchema }),
    z.strictObject({ mode: z.literal('edge') }),
    z.strictObject({ mode: z.literal('mirror') }),
    z.strictObject({ mode: z.literal('auto') }),
  ],
  { error: 'mode must be "solid" (with a color), "edge", "mirror" or "auto"' },
);

export const recipeSchema = z
  .strictObject({
    name: z.string({ error: 'is required' }).trim().min(1, 'is required').max(120, 'must be 120 characters or fewer'),
    trim: z
      .union([z.enum(TRIM_PRESET_NAMES), trimObjectSchema], {
        error: `must be a preset (${TRIM_PRESET_NAMES.join(', ')}) or { width, height, unit }`,
      })
      .default('poker'),
    bleed: lengthSchema.default({ size: 0.125, unit: 'in' }),
    safe: lengthSchema.default({ size: 0.125, unit: 'in' }),
    dpi: z
      .number({ error: 'must be a number' })
      .int('must be a whole number')
      .min(MIN_DPI, `must be ${MIN_DPI} or more`)
      .max(MAX_DPI, `must be ${MAX_DPI} or less`)
      .default(300),
    source: z.enum(['trim', 'bleed', 'auto'], { error: 'must be "trim", "bleed" or "auto"' }).default('auto'),
    fit: z.enum(['cover', 'contain', 'stretch'], { error: 'must be "cover", "contain" or "stretch"' }).default('cover'),
    fill: fillSchema.default({ mode: 'auto' }),
    turn: turnSchema.default('clockwise'),
    turnRules: z
      .array(z.strictObject({ match: z.string().min(1, 'must be a file pattern'), turn: turnSchema }))
      .max(100, 'must have 100 rules or fewer')
      .default([]),
    naming: z
      .string({ error: 'must be a text template' })
      .min(1, 'must not be empty')
      .max(200, 'must be 200 characters or fewer')
      .refine((s) => !/[\\/]/.test(s), 'must not contain / or \\ (outputs go in one folder)')
      .default('{name}.png'),
    order: z.enum(['natural', 'manifest'], { error: 'must be "natural" or "manifest"' }).default('natural'),
    back: z
      .strictObject({
        art: z.string().min(1, 'must be a file name or null').nullable().default(null),
        placement: z
          .enum(['last', 'first', 'interleaved', 'none'], { error: 'must be "last", "first", "interleaved" or "none"' })
          .default('none'),
      })
      .default({ art: null, placement: 'none' }),
    sheet: z
      .strictObject({
        multiple: z
          .number({ error: 'must be a number' })
          .int('must be a whole number')
          .min(1, 'must be 1 or more')
          .max(1000, 'must be 1000 or less')
          .default(18),
        pad: z.enum(['none', 'blank', 'back', 'repeat'], { error: 'must be "none", "blank", "back" or "repeat"' }).default('none'),
      })
      .default({ multiple: 18, pad: 'none' }),
    outputs: z
      .strictObject({
        singles: z.enum(['png', 'tiff', 'jpeg'], { error: 'must be "png", "tiff", "jpeg" or null' }).nullable().default('png'),
        pdf: z.boolean({ error: 'must be true or false' }).default(true),
        sheets: z
          .strictObject({
            paper: z.enum(['letter', 'a4'], { error: 'must be "letter" or "a4"' }),
            marks: z.boolean({ error: 'must be true or false' }).default(true),
          })
          .nullable()
          .default(null),
        proof: z.boolean({ error: 'must be true or false' }).default(true),
      })
      .default({ singles: 'png', pdf: true, sheets: null, proof: true }),
  })
  .superRefine((r, ctx) => {
    const trim = resolveTrimIn(r.trim);
    const longest = Math.max(trim.w, trim.h);
    const shortest = Math.min(trim.w, trim.h);
    if (longest > mmToInches(MAX_TRIM_MM)) {
      ctx.addIssue({ code: 'custom', path: ['trim'], message: `must be ${MAX_TRIM_MM} mm or less on each side` });
    }
    const bleedIn = toInches(r.bleed);
    if (bleedIn >= shortest) {
      ctx.addIssue({ code: 'custom', path: ['bleed', 'size'], message: 'must be smaller than the trim' });
    }
    if (2 * toInches(r.safe) >= shortest) {
      ctx.addIssue({ code: 'custom', path: ['safe', 'size'], message: 'must be less than half the trim' });
    }
    if (r.back.placement !== 'none' && r.back.placement !== 'interleaved' && r.back.art === null) {
      ctx.addIssue({ code: 'custom', path: ['back', 'art'], message: `is required when placement is "${r.back.placement}"` });
    }
    if (r.sheet.pad === 'back' && r.back.art === null) {
      ctx.addIssue({ code: 'custom', path: ['sheet', 'pad'], message: '"back" padding needs back.art' });
    }
    const pageLongestPx = pxFor(longest + 2 * bleedIn, r.dpi);
    if (pageLongestPx > 30000) {
      ctx.addIssue({ code: 'custom', path: ['dpi'], message: 'with this trim gives images over 30000 pixels a side' });
    }
  });

/** What a recipe file or form may contain (defaults not yet applied). */
export type RecipeInput = z.input<typeof recipeSchema>;
/** A parsed recipe with every default applied. */
export type Recipe = z.output<typeof recipeSchema>;
export type Fill = Recipe['fill'];
export type Turn = Recipe['turn'];

function formatIssue(issue: z.core.$ZodIssue): string {
  const path = issue.path.map(String).join('.');
  const why = issue.code === 'unrecognized_keys' ? `unknown field ${issue.keys.map((k) => `"${k}"`).join(', ')}` : issue.message;
  return `${path || 'recipe'}: ${why}`;
}

/** Parses a recipe (object or JSON text); throws RECIPE_INVALID naming the field and why. */
export function parseRecipe(json: unknown): Recipe {
  let value = json;
  if (typeof json === 'string') {
    try {
      value = JSON.parse(json);
    } catch (err) {
      throw new BleedwrightError('RECIPE_INVALID', `recipe: is not valid JSON (${(err as Error).message})`);
    }
  }
  const result = recipeSchema.safeParse(value);
  if (!result.success) {
    throw new BleedwrightError('RECIPE_INVALID', formatIssue(result.error.issues[0]!));
  }
  return result.data;
}

/** A complete, valid recipe to start from (`bleedwright recipe --example`). */
export function exampleRecipe(): RecipeInput {
  return {
    name: 'Poker deck for print',
    trim: 'poker',
    bleed: { size: 0.125, unit: 'in' },
    safe: { size: 0.125, unit: 'in' },
    dpi: 300,
    source: 'auto',
    fit: 'cover',
    fill: { mode: 'auto' },
    turn: 'clockwise',
    turnRules: [],
    naming: '{seq:3}-{name}.{ext}',
    order: 'natural',
    back: { art: null, placement: 'none' },
    sheet: { multiple: 18, pad: 'blank' },
    outputs: { singles: 'png', pdf: true, sheets: { paper: 'letter', marks: true }, proof: true },
  };
}

/** Trim in inches (width, height) from a preset name or an explicit size. */
export function resolveTrimIn(trim: Recipe['trim']): { w: number; h: number } {
  if (typeof trim === 'string') {
    const preset = findPreset(trim);
    if (!preset) throw new BleedwrightError('RECIPE_INVALID', `trim: unknown preset "${trim}"`);
    return { w: mmToInches(preset.width), h: mmToInches(preset.height) };
  }
  const len = (size: number): Length => ({ size, unit: trim.unit });
  return { w: toInches(len(trim.width)), h: toInches(len(trim.height)) };
}

export type RecipeGeometry = {
  trimIn: { w: number; h: number };
  bleedIn: number;
  safeIn: number;
  dpi: number;
  /** Whole output image: Math.round((trim + 2 x bleed) in inches x dpi) per side. */
  pagePx: { w: number; h: number };
  /** Trim in pixels: Math.round(trim in inches x dpi) per side. */
  trimPx: { w: number; h: number };
  /** Bleed in pixels on one side; may be a half pixel (poker 1/8 in at 300 DPI = 37.5). */
  bleedPx: number;
  /** Whole-pixel bleed on each edge: left/top take the floor, right/bottom the rest. */
  bleedEdgesPx: { left: number; top: number; right: number; bottom: number };
  safePx: number;
  pagePt: { w: number; h: number };
  bleedPt: number;
  /** PDF TrimBox [x1 y1 x2 y2] in points inside a page whose MediaBox is [0 0 pagePt.w pagePt.h]. */
  trimBoxPt: [number, number, number, number];
};

export function recipeGeometry(recipe: Pick<Recipe, 'trim' | 'bleed' | 'safe' | 'dpi'>): RecipeGeometry {
  const trimIn = resolveTrimIn(recipe.trim);
  const bleedIn = toInches(recipe.bleed);
  const safeIn = toInches(recipe.safe);
  const dpi = recipe.dpi;
  const pagePx = { w: pxFor(trimIn.w + 2 * bleedIn, dpi), h: pxFor(trimIn.h + 2 * bleedIn, dpi) };
  const trimPx = { w: pxFor(trimIn.w, dpi), h: pxFor(trimIn.h, dpi) };
  const padW = pagePx.w - trimPx.w;
  const padH = pagePx.h - trimPx.h;
  const bleedEdgesPx = {
    left: Math.floor(padW / 2),
    right: padW - Math.floor(padW / 2),
    top: Math.floor(padH / 2),
    bottom: padH - Math.floor(padH / 2),
  };
  const bleedPt = roundPt(inchesToPt(bleedIn));
  const pagePt = { w: roundPt(inchesToPt(trimIn.w + 2 * bleedIn)), h: roundPt(inchesToPt(trimIn.h + 2 * bleedIn)) };
  return {
    trimIn,
    bleedIn,
    safeIn,
    dpi,
    pagePx,
    trimPx,
    bleedPx: padW / 2,
    bleedEdgesPx,
    safePx: Math.round(safeIn * dpi),
    pagePt,
    bleedPt,
    trimBoxPt: [bleedPt, bleedPt, roundPt(pagePt.w - bleedPt), roundPt(pagePt.h - bleedPt)],
  };
}
