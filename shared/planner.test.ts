import { describe, expect, it } from 'vitest';
import { planPrint, priceOrder, roundMoney, suggestFills, type PriceTerms } from './planner.ts';

// Invented prices (no real printer's data): three deck sizes, a setup fee waived from 10 sets.
const TERMS: PriceTerms = {
  tiers: [
    { maxCards: 54, pricePerSet: 9.5 },
    { maxCards: 108, pricePerSet: 14.25 },
    { maxCards: 126, pricePerSet: 16 },
  ],
  setupFee: 25,
  setupWaivedAtSets: 10,
  stocks: [
    { name: 'Standard', surchargePerSet: 0 },
    { name: 'Linen', surchargePerSet: 1.1 },
  ],
};

describe('planPrint padding', () => {
  // Sheets of 18 poker cards: common practice, no source (DESIGN.md: 50 -> 54, 110 -> 126).
  it.each([
    [50, 54, 4, 3],
    [100, 108, 8, 6],
    [110, 126, 16, 7],
    [114, 126, 12, 7],
    [108, 108, 0, 6],
    [1, 18, 17, 1],
  ])('%i faces at 18 a sheet -> %i (%i blank slots, %i sheets)', (faces, padded, blank, sheets) => {
    const plan = planPrint({ faces, sheetMultiple: 18, sets: 1 });
    expect(plan.paddedSize).toBe(padded);
    expect(plan.blankSlots).toBe(blank);
    expect(plan.sheetsPerSet).toBe(sheets);
    expect(plan.pricing).toBeNull();
  });

  it('multiplies cards by sets and treats a multiple of 1 as no padding', () => {
    expect(planPrint({ faces: 50, sheetMultiple: 18, sets: 3 }).totalCards).toBe(162);
    const plan = planPrint({ faces: 53, sheetMultiple: 1, sets: 2 });
    expect([plan.paddedSize, plan.blankSlots, plan.totalCards]).toEqual([53, 0, 106]);
  });
});

describe('priceOrder', () => {
  it('charges the setup fee below the threshold and waives it exactly at it', () => {
    const nine = priceOrder(54, 9, TERMS);
    expect(nine.setupWaived).toBe(false);
    expect(nine.setsToWaiveSetup).toBe(1);
    expect(nine.total).toBe(9.5 * 9 + 25); // 110.5
    const ten = priceOrder(54, 10, TERMS);
    expect(ten.setupWaived).toBe(true);
    expect(ten.setsToWaiveSetup).toBe(0);
    expect(ten.total).toBe(95);
    expect(ten.costPerSet).toBe(9.5);
    expect(nine.costPerSet).toBe(roundMoney(110.5 / 9)); // 12.28
  });

  it('never waives the fee when there is no threshold', () => {
    const p = priceOrder(54, 500, { ...TERMS, setupWaivedAtSets: null });
    expect(p.setupWaived).toBe(false);
    expect(p.total).toBe(9.5 * 500 + 25);
  });

  it('picks the cheapest deck size that holds the padded deck', () => {
    const p = priceOrder(108, 1, TERMS);
    expect(p.tier).toEqual({ maxCards: 108, pricePerSet: 14.25 });
    expect(p.quotes.map((q) => q.holds)).toEqual([false, true, true]);
    // A bigger deck size that happens to cost less wins over the smallest one that fits.
    const odd = priceOrder(100, 1, { ...TERMS, tiers: [...TERMS.tiers, { maxCards: 162, pricePerSet: 13 }] });
    expect(odd.smallestTier?.maxCards).toBe(108);
    expect(odd.tier).toEqual({ maxCards: 162, pricePerSet: 13 });
  });

  it('has no tier when none holds the deck', () => {
    const p = priceOrder(144, 1, TERMS);
    expect(p.tier).toBeNull();
    expect(p.total).toBe(0);
  });

  it('adds the stock surcharge to every set, in cents', () => {
    const p = priceOrder(54, 3, TERMS, 'Linen');
    expect(p.stock?.name).toBe('Linen');
    expect(p.pricePerSet).toBe(10.6);
    expect(p.total).toBe(roundMoney(10.6 * 3 + 25)); // 56.8, not 56.800000000000004
    expect(p.total).toBe(56.8);
  });
});

describe('planPrint with a price sheet', () => {
  it('prices the padded size, not the raw faces', () => {
    // 50 faces pad to 54: the 54 tier holds it. 55 faces pad to 72, which only the 108 tier holds.
    expect(planPrint({ faces: 50, sheetMultiple: 18, sets: 10, priceSheet: TERMS }).pricing?.tier?.maxCards).toBe(54);
    const plan = planPrint({ faces: 55, sheetMultiple: 18, sets: 2, priceSheet: TERMS });
    expect(plan.paddedSize).toBe(72);
    expect(plan.pricing?.tier?.maxCards).toBe(108);
    expect(plan.pricing?.total).toBe(14.25 * 2 + 25);
  });
});

describe('suggestFills', () => {
  it('suggests nothing when no slot is blank', () => {
    expect(suggestFills(0, [{ source: 'a.png', copies: 3 }])).toEqual([]);
  });

  it('names the cards with the most copies first', () => {
    const s = suggestFills(4, [
      { source: 'art/lantern.png', copies: 1 },
      { source: 'art/ferry.png', copies: 3 },
      { source: 'art/gull.png', copies: 2 },
    ]);
    expect(s.map((x) => x.kind)).toEqual(['extra-copies', 'reference-cards', 'second-back', 'leave-blank']);
    expect(s[0]!.text).toContain('ferry (×3), gull (×2), lantern (×1)');
    expect(s[0]!.slots).toBe(4);
  });

  it('does not call single copies "repeated"', () => {
    const s = suggestFills(2, [{ source: 'a.png', copies: 1 }]);
    expect(s[0]!.kind).toBe('extra-copies');
    expect(s[0]!.text).not.toContain('a (×1)');
  });
});
