// Deck planning: print order, copies, back placement and padding to the sheet multiple. Pure code.
import type { Recipe } from './recipe.ts';

export type ManifestRow = { file: string; copies: number; back: string | null; title: string | null; row: number };

export type DeckSlot = {
  /** 1-based position in print order (one page of the combined PDF). */
  seq: number;
  kind: 'front' | 'back' | 'blank';
  /** Art-set path of the image for this slot; null for blank slots. */
  source: string | null;
  /** Which copy of the front this is (1-based); for backs and blanks, the copy of the front they follow or 0. */
  copy: number;
  /** True when the slot only exists to reach the sheet multiple. */
  padding: boolean;
};

const collator = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/** Natural sort of paths: "card2" before "card10", letter case ignored, ties broken by code points. */
export function naturalCompare(a: string, b: string): number {
  return collator.compare(a, b) || (a < b ? -1 : a > b ? 1 : 0);
}

export function naturalSort(paths: readonly string[]): string[] {
  return [...paths].sort(naturalCompare);
}

/**
 * Smallest multiple of `multiple` that holds `n` cards (common practice: sheets of 18 poker cards,
 * so 50 -> 54, 110 -> 126). A multiple of 1 or less means no padding.
 */
export function padToMultiple(n: number, multiple: number): number {
  if (multiple <= 1 || n <= 0) return n;
  return Math.ceil(n / multiple) * multiple;
}

type PlanInput = {
  /** Art-set paths of the fronts that were produced (skipped cards are left out). */
  cards: readonly string[];
  recipe: Pick<Recipe, 'order' | 'back' | 'sheet'>;
  manifest?: readonly ManifestRow[] | null;
};

export type DeckPlan = { slots: DeckSlot[]; faces: number; paddingAdded: number };

/** Fronts in print order with their copy counts (manifest copies default to 1; 0 leaves a card out). */
export function orderFronts(input: PlanInput): Array<{ source: string; copies: number; back: string | null }> {
  const byFile = new Map((input.manifest ?? []).map((row) => [row.file, row]));
  const available = new Set(input.cards);
  let ordered: string[];
  if (input.recipe.order === 'manifest' && input.manifest && input.manifest.length > 0) {
    const listed = input.manifest.map((r) => r.file).filter((f) => available.has(f));
    const listedSet = new Set(listed);
    ordered = [...listed, ...naturalSort(input.cards.filter((c) => !listedSet.has(c)))];
  } else {
    ordered = naturalSort(input.cards);
  }
  return ordered.map((source) => {
    const row = byFile.get(source);
    return { source, copies: row ? row.copies : 1, back: row?.back ?? null };
  });
}

/** The deck in print order: copies, back placement, padding to the sheet multiple. */
export function planDeck(input: PlanInput): DeckPlan {
  const { back, sheet } = input.recipe;
  const fronts = orderFronts(input);
  const commonBack = back.art;
  const interleaved = back.placement === 'interleaved';

  type Face = { source: string | null; copy: number; padding: boolean; back: string | null };
  const faces: Face[] = [];
  for (const f of fronts) {
    for (let copy = 1; copy <= f.copies; copy++) faces.push({ source: f.source, copy, padding: false, back: f.back ?? commonBack });
  }
  const realFaces = faces.length;
  const target = sheet.pad === 'none' ? realFaces : padToMultiple(realFaces, sheet.multiple);
  for (let i = 0; faces.length < target; i++) {
    if (sheet.pad === 'repeat' && realFaces > 0) {
      const again = faces[i % realFaces]!;
      faces.push({ ...again, padding: true });
    } else if (sheet.pad === 'back' && commonBack) {
      faces.push({ source: commonBack, copy: 0, padding: true, back: commonBack });
    } else {
      faces.push({ source: null, copy: 0, padding: true, back: commonBack });
    }
  }

  const slots: Omit<DeckSlot, 'seq'>[] = [];
  const faceSlot = (f: Face): Omit<DeckSlot, 'seq'> =>
    f.source === null
      ? { kind: 'blank', source: null, copy: 0, padding: f.padding }
      : { kind: f.copy === 0 ? 'back' : 'front', source: f.source, copy: f.copy, padding: f.padding };

  if (back.placement === 'first' && commonBack) slots.push({ kind: 'back', source: commonBack, copy: 0, padding: false });
  for (const f of faces) {
    slots.push(faceSlot(f));
    if (interleaved) {
      slots.push(
        f.back ? { kind: 'back', source: f.back, copy: f.copy, padding: f.padding } : { kind: 'blank', source: null, copy: f.copy, padding: f.padding },
      );
    }
  }
  if (back.placement === 'last' && commonBack) slots.push({ kind: 'back', source: commonBack, copy: 0, padding: false });

  return {
    slots: slots.map((s, i) => ({ ...s, seq: i + 1 })),
    faces: faces.length,
    paddingAdded: faces.length - realFaces,
  };
}
