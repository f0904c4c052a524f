// Print planning: how a deck fills the printer's press sheets, how many slots are left blank, what
// could go in them, and what an order costs under a workspace's price sheet. Pure arithmetic.
import { padToMultiple } from './deck.ts';

/** One deck size a printer sells: decks of up to `maxCards` cards cost `pricePerSet` per set. */
export type PriceTier = { maxCards: number; pricePerSet: number };
/** A card stock choice that adds `surchargePerSet` to every set. */
export type StockOption = { name: string; surchargePerSet: number };

/** The prices the planner needs; a price sheet as members enter it. */
export type PriceTerms = {
  tiers: readonly PriceTier[];
  setupFee: number;
  /** Orders of at least this many sets pay no setup fee; null when it is never waived. */
  setupWaivedAtSets: number | null;
  stocks: readonly StockOption[];
};

/** A front in print order with its copy count, used to suggest what fills blank slots. */
export type PlannedFront = { source: string; copies: number };

export type PlanRequest = {
  /** Card faces of one set: every copy of every front (a common back printed on every card is not a slot). */
  faces: number;
  sheetMultiple: number;
  sets: number;
  priceSheet?: PriceTerms | null;
  /** Name of the chosen stock option; null or unknown means no surcharge. */
  stock?: string | null;
  fronts?: readonly PlannedFront[];
};

export type TierQuote = {
  tier: PriceTier;
  /** True when the tier's deck size holds the padded deck. */
  holds: boolean;
  pricePerSet: number;
  total: number;
  costPerSet: number;
};

export type PlanPricing = {
  /** The tier the order is priced at: the cheapest that holds the deck; null when none does. */
  tier: PriceTier | null;
  /** Smallest deck size that holds the deck (what one would pick without comparing prices). */
  smallestTier: PriceTier | null;
  /** Every tier, smallest deck size first, with what the order would cost at it. */
  quotes: TierQuote[];
  stock: StockOption | null;
  setupFee: number;
  setupWaived: boolean;
  /** Sets still needed for the setup fee to be waived; 0 when waived or never waived. */
  setsToWaiveSetup: number;
  pricePerSet: number;
  total: number;
  costPerSet: number;
};

export type SlotSuggestion = {
  kind: 'extra-copies' | 'reference-cards' | 'second-back' | 'leave-blank';
  slots: number;
  text: string;
};

export type PrintPlan = {
  faces: number;
  sheetMultiple: number;
  sets: number;
  /** Faces padded up to the sheet multiple. */
  paddedSize: number;
  /** Slots the padding adds: blank unless filled. */
  blankSlots: number;
  sheetsPerSet: number;
  totalCards: number;
  pricing: PlanPricing | null;
  suggestions: SlotSuggestion[];
};

/** Amounts are currency units with cents; adding them in cents keeps 0.1 + 0.2 from showing. */
export function roundMoney(amount: number): number {
  return Math.round(amount * 100) / 100;
}

function quote(tier: PriceTier, paddedSize: number, sets: number, surcharge: number, setupCharged: number): TierQuote {
  const pricePerSet = roundMoney(tier.pricePerSet + surcharge);
  const total = roundMoney(pricePerSet * sets + setupCharged);
  return { tier, holds: tier.maxCards >= paddedSize, pricePerSet, total, costPerSet: roundMoney(total / sets) };
}

/** Prices an order of `sets` sets of a deck of `paddedSize` cards under `terms`. */
export function priceOrder(paddedSize: number, sets: number, terms: PriceTerms, stockName?: string | null): PlanPricing {
  const stock = terms.stocks.find((s) => s.name === stockName) ?? null;
  const surcharge = stock?.surchargePerSet ?? 0;
  const waiveAt = terms.setupWaivedAtSets;
  const setupWaived = waiveAt !== null && sets >= waiveAt;
  const setupCharged = setupWaived ? 0 : terms.setupFee;
  const tiers = [...terms.tiers].sort((a, b) => a.maxCards - b.maxCards || a.pricePerSet - b.pricePerSet);
  const quotes = tiers.map((t) => quote(t, paddedSize, sets, surcharge, setupCharged));
  const holding = quotes.filter((q) => q.holds);
  // Cheapest per set; a tie goes to the smaller deck size (listed first).
  const best = holding.reduce<TierQuote | null>((min, q) => (min === null || q.pricePerSet < min.pricePerSet ? q : min), null);
  return {
    tier: best?.tier ?? null,
    smallestTier: holding[0]?.tier ?? null,
    quotes,
    stock,
    setupFee: terms.setupFee,
    setupWaived,
    setsToWaiveSetup: waiveAt === null || setupWaived ? 0 : waiveAt - sets,
    pricePerSet: best?.pricePerSet ?? 0,
    total: best?.total ?? 0,
    costPerSet: best?.costPerSet ?? 0,
  };
}

/** Ideas for the slots padding leaves empty; each says how many slots it would fill. */
export function suggestFills(blankSlots: number, fronts: readonly PlannedFront[] = []): SlotSuggestion[] {
  if (blankSlots <= 0) return [];
  const out: SlotSuggestion[] = [];
  // Cards already wanted in several copies are the ones players run short of.
  const popular = [...fronts].filter((f) => f.copies > 0).sort((a, b) => b.copies - a.copies || (a.source < b.source ? -1 : 1));
  if (popular.length > 0 && popular[0]!.copies > 1) {
    const picks = popular.slice(0, Math.min(blankSlots, 3)).map((f) => `${stem(f.source)} (×${f.copies})`);
    out.push({ kind: 'extra-copies', slots: blankSlots, text: `Add ${blankSlots} extra ${blankSlots === 1 ? 'copy' : 'copies'} of the cards the deck already repeats, such as ${picks.join(', ')}.` });
  } else if (popular.length > 0) {
    out.push({ kind: 'extra-copies', slots: blankSlots, text: `Add ${blankSlots} extra ${blankSlots === 1 ? 'copy' : 'copies'} of the cards players reach for most, as spares.` });
  }
  out.push({
    kind: 'reference-cards',
    slots: blankSlots,
    text: `Add up to ${blankSlots} rules summary or reference ${blankSlots === 1 ? 'card' : 'cards'}.`,
  });
  out.push({ kind: 'second-back', slots: Math.min(blankSlots, 1), text: 'Add a spare card printed with the card back, for a lost or damaged card.' });
  out.push({ kind: 'leave-blank', slots: blankSlots, text: `Leave ${blankSlots} blank ${blankSlots === 1 ? 'card' : 'cards'}: handy for writing house rules.` });
  return out;
}

function stem(source: string): string {
  const base = source.split('/').pop() ?? source;
  return base.replace(/\.[^.]+$/, '');
}

/** The whole plan: padding to the sheet multiple, blank slots, sheets, prices and suggestions. */
export function planPrint(req: PlanRequest): PrintPlan {
  const faces = Math.max(0, Math.floor(req.faces));
  const sheetMultiple = Math.max(1, Math.floor(req.sheetMultiple));
  const sets = Math.max(1, Math.floor(req.sets));
  const paddedSize = padToMultiple(faces, sheetMultiple);
  const blankSlots = paddedSize - faces;
  return {
    faces,
    sheetMultiple,
    sets,
    paddedSize,
    blankSlots,
    sheetsPerSet: paddedSize / sheetMultiple,
    totalCards: paddedSize * sets,
    pricing: req.priceSheet ? priceOrder(paddedSize, sets, req.priceSheet, req.stock) : null,
    suggestions: suggestFills(blankSlots, req.fronts),
  };
}
