import { describe, expect, it } from 'vitest';
import { BleedwrightError } from '../../shared/errors.ts';
import { padToMultiple, planDeck, naturalSort } from '../../shared/deck.ts';
import { renderName, uniqueNames } from '../../shared/naming.ts';
import { exampleRecipe, parseRecipe, recipeGeometry } from '../../shared/recipe.ts';
import { pixelsPerMetre } from '../../shared/units.ts';

describe('geometry', () => {
  it('poker 63.5 x 88.9 mm + 1/8 in bleed at 300 DPI is 825 x 1125 px; bridge 750 x 1125', () => {
    // common practice, no source; arithmetic
    const poker = recipeGeometry(parseRecipe({ name: 'p', trim: 'poker' }));
    expect(poker.pagePx).toEqual({ w: 825, h: 1125 });
    expect(poker.trimPx).toEqual({ w: 750, h: 1050 });
    const bridge = recipeGeometry(parseRecipe({ name: 'b', trim: 'bridge' }));
    expect(bridge.pagePx).toEqual({ w: 750, h: 1125 });
  });

  it('poker + 3 mm bleed rounds 820.87 x 1120.87 to 821 x 1121 (our fixed rounding rule)', () => {
    const g = recipeGeometry(parseRecipe({ name: 'p', bleed: { size: 3, unit: 'mm' } }));
    expect(g.pagePx).toEqual({ w: 821, h: 1121 });
    expect(g.bleedEdgesPx.left + g.trimPx.w + g.bleedEdgesPx.right).toBe(821);
  });

  it('PDF page 198 x 270 pt with TrimBox 9 9 189 261', () => {
    // ISO 32000-1 14.11.2 page boundaries, 1/72 in user unit (8.3.2)
    const g = recipeGeometry(parseRecipe({ name: 'p' }));
    expect(g.pagePt).toEqual({ w: 198, h: 270 });
    expect(g.trimBoxPt).toEqual([9, 9, 189, 261]);
  });

  it('pHYs for 300 DPI is 11811 px/m', () => {
    // PNG specification (ISO/IEC 15948) pHYs, unit 1 = metre
    expect(pixelsPerMetre(300)).toBe(11811);
  });
});

describe('recipe', () => {
  it('applies the DESIGN.md defaults', () => {
    const r = parseRecipe({ name: 'x' });
    expect(r.trim).toBe('poker');
    expect(r.bleed).toEqual({ size: 0.125, unit: 'in' });
    expect(r.dpi).toBe(300);
    expect(r.fill).toEqual({ mode: 'auto' });
    expect(r.sheet).toEqual({ multiple: 18, pad: 'none' });
    expect(r.outputs).toEqual({ singles: 'png', pdf: true, sheets: null, proof: true });
    expect(r.naming).toBe('{name}.png');
  });

  it('rejects bad values with RECIPE_INVALID, the field path and why', () => {
    const bad = (input: unknown) => {
      try {
        parseRecipe(input);
      } catch (err) {
        expect(err).toBeInstanceOf(BleedwrightError);
        expect((err as BleedwrightError).code).toBe('RECIPE_INVALID');
        return (err as Error).message;
      }
      throw new Error('expected RECIPE_INVALID');
    };
    expect(bad({ name: 'x', bleed: { size: -1, unit: 'mm' } })).toBe('bleed.size: must be 0 or more');
    expect(bad({ name: 'x', dpi: 20 })).toBe('dpi: must be 72 or more');
    expect(bad({ name: 'x', trim: { width: 900, height: 50, unit: 'mm' } })).toMatch(/^trim: must be 500 mm/);
    expect(bad({ name: 'x', bleed: { size: 3, unit: 'in' } })).toBe('bleed.size: must be smaller than the trim');
    expect(bad({ name: 'x', fill: { mode: 'glitter' } })).toMatch(/^fill/);
    expect(bad({ name: 'x', back: { art: null, placement: 'last' } })).toMatch(/^back\.art: is required/);
    expect(bad({})).toMatch(/^name: /);
    expect(bad({ name: 'x', bleeed: 1 })).toBe('recipe: unknown field "bleeed"');
    expect(bad({ name: 'x', trim: { width: -5, height: 10, unit: 'mm' } })).toBe('trim.width: must be more than 0');
    expect(bad('{ not json')).toMatch(/^recipe: is not valid JSON/);
  });

  it('the example recipe parses', () => {
    expect(() => parseRecipe(exampleRecipe())).not.toThrow();
  });
});

describe('deck', () => {
  it('pads 50 -> 54, 100 -> 108, 110 -> 126, 114 -> 126 with a multiple of 18', () => {
    // common practice: print-on-demand sheets of 18 poker cards
    expect(padToMultiple(50, 18)).toBe(54);
    expect(padToMultiple(100, 18)).toBe(108);
    expect(padToMultiple(110, 18)).toBe(126);
    expect(padToMultiple(114, 18)).toBe(126);
    expect(padToMultiple(54, 18)).toBe(54);
  });

  it('sorts naturally', () => {
    expect(naturalSort(['card10.png', 'Card2.png', 'card1.png'])).toEqual(['card1.png', 'Card2.png', 'card10.png']);
  });

  const cards = Array.from({ length: 50 }, (_, i) => `c${i + 1}.png`);

  it('counts faces for padding; a common back placed last is not a slot', () => {
    const plan = planDeck({ cards, recipe: { order: 'natural', back: { art: 'back.png', placement: 'last' }, sheet: { multiple: 18, pad: 'blank' } } });
    expect(plan.faces).toBe(54);
    expect(plan.paddingAdded).toBe(4);
    expect(plan.slots).toHaveLength(55);
    expect(plan.slots.at(-1)).toMatchObject({ kind: 'back', source: 'back.png' });
    expect(plan.slots.filter((s) => s.kind === 'blank')).toHaveLength(4);
    expect(plan.slots.map((s) => s.seq)).toEqual(Array.from({ length: 55 }, (_, i) => i + 1));
  });

  it('places backs first, interleaved, and pads with backs or repeats', () => {
    const recipe = { order: 'natural' as const, back: { art: 'back.png', placement: 'first' as const }, sheet: { multiple: 4, pad: 'repeat' as const } };
    const first = planDeck({ cards: ['a.png', 'b.png', 'c.png'], recipe });
    expect(first.slots.map((s) => s.source)).toEqual(['back.png', 'a.png', 'b.png', 'c.png', 'a.png']);
    const inter = planDeck({
      cards: ['a.png', 'b.png'],
      recipe: { ...recipe, back: { art: 'back.png', placement: 'interleaved' }, sheet: { multiple: 3, pad: 'back' } },
      manifest: [{ file: 'b.png', copies: 2, back: 'b-back.png', title: null, row: 2 }],
    });
    expect(inter.slots.map((s) => `${s.kind}:${s.source}`)).toEqual([
      'front:a.png', 'back:back.png', 'front:b.png', 'back:b-back.png', 'front:b.png', 'back:b-back.png',
    ]);
    expect(inter.faces).toBe(3);
  });

  it('follows the manifest order and copies; copies 0 leaves a card out', () => {
    const plan = planDeck({
      cards: ['a.png', 'b.png', 'c.png'],
      recipe: { order: 'manifest', back: { art: null, placement: 'none' }, sheet: { multiple: 18, pad: 'none' } },
      manifest: [
        { file: 'c.png', copies: 2, back: null, title: null, row: 2 },
        { file: 'a.png', copies: 0, back: null, title: null, row: 3 },
      ],
    });
    expect(plan.slots.map((s) => `${s.source}#${s.copy}`)).toEqual(['c.png#1', 'c.png#2', 'b.png#1']);
  });
});

describe('naming', () => {
  it('fills tokens and never collides, even by letter case', () => {
    const t = { name: 'Hero', seq: 7, copy: 2, folder: 'set-a', ext: 'png' };
    expect(renderName('{seq:3}-{name}-{copy}.{ext}', t)).toBe('007-Hero-2.png');
    expect(renderName('{folder}/{name}.png', t)).toBe('set-a_Hero.png');
    expect(renderName('{name}.png', { ...t, ext: 'tif' })).toBe('Hero.tif');
    expect(renderName('..', t)).toBe('card-7.png');
    expect(uniqueNames(['Hero.png', 'hero.png', 'HERO.png', 'hero-2.png'])).toEqual(['Hero.png', 'hero-2.png', 'HERO-3.png', 'hero-2-2.png']);
  });
});
