// Request and response shapes of the price sheets API (issue 5). A price sheet is what members copy
// from their printer's price list: deck size tiers, a setup fee and when it is waived, stock options.
// The server validates with these schemas; the client's form uses the same ones.
import { z } from 'zod';
import type { PriceTerms } from '../planner.ts';

/** Largest amount accepted in a price field: far above any card order, small enough to catch typos. */
export const MAX_PRICE = 1_000_000;

const money = z
  .number({ error: 'must be a number' })
  .min(0, 'must be 0 or more')
  .max(MAX_PRICE, `must be ${MAX_PRICE} or less`)
  .refine((n) => Math.abs(n * 100 - Math.round(n * 100)) < 1e-6, 'must have at most 2 decimals');

export const priceTierSchema = z.strictObject({
  maxCards: z.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be 1 or more').max(10_000, 'must be 10000 or less'),
  pricePerSet: money,
});

export const stockOptionSchema = z.strictObject({
  name: z.string({ error: 'is required' }).trim().min(1, 'is required').max(60, 'must be 60 characters or fewer'),
  surchargePerSet: money,
});

export const priceSheetBodySchema = z
  .strictObject({
    name: z.string({ error: 'is required' }).trim().min(1, 'is required').max(120, 'must be 120 characters or fewer'),
    currency: z
      .string({ error: 'must be a 3-letter code like "EUR"' })
      .trim()
      .regex(/^[A-Z]{3}$/, 'must be a 3-letter code like "EUR"')
      .default('USD'),
    tiers: z.array(priceTierSchema).min(1, 'needs at least one deck size').max(50, 'must have 50 deck sizes or fewer'),
    setupFee: money.default(0),
    setupWaivedAtSets: z.number({ error: 'must be a number or empty' }).int('must be a whole number').min(1, 'must be 1 or more').max(100_000).nullable().default(null),
    stocks: z.array(stockOptionSchema).max(20, 'must have 20 stock options or fewer').default([]),
  })
  .superRefine((sheet, ctx) => {
    const seen = new Set<number>();
    sheet.tiers.forEach((t, i) => {
      if (seen.has(t.maxCards)) ctx.addIssue({ code: 'custom', path: ['tiers', i, 'maxCards'], message: 'is listed twice' });
      seen.add(t.maxCards);
    });
    const names = new Set<string>();
    sheet.stocks.forEach((s, i) => {
      const key = s.name.toLowerCase();
      if (names.has(key)) ctx.addIssue({ code: 'custom', path: ['stocks', i, 'name'], message: 'is listed twice' });
      names.add(key);
    });
  });

export type PriceSheetBody = z.input<typeof priceSheetBodySchema>;
export type PriceSheetSettings = z.output<typeof priceSheetBodySchema>;

export type PriceSheet = PriceSheetSettings & {
  id: string;
  createdAt: string;
  updatedAt: string;
};

export type PriceSheetListResponse = { priceSheets: PriceSheet[] };
export type PriceSheetResponse = { priceSheet: PriceSheet };

/** The part of a price sheet the planner prices with. */
export function priceTermsOf(sheet: PriceSheetSettings): PriceTerms {
  return { tiers: sheet.tiers, setupFee: sheet.setupFee, setupWaivedAtSets: sheet.setupWaivedAtSets, stocks: sheet.stocks };
}
