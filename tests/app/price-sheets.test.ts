// Price sheets: stored per workspace, validated by the shared schema, never visible from another
// workspace; what is read back prices an order the same way the planner page does.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { planPrint } from '../../shared/planner.ts';
import { priceTermsOf, type PriceSheet } from '../../shared/api/price-sheets.ts';
import { DEMO_PRICE_SHEET, seedDemo } from '../../server/seed.ts';
import { listPriceSheets } from '../../server/services/price-sheets.ts';
import { createWorkspaceFixture, startTestServer, type WorkspaceFixture } from './fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
const base = () => `/api/workspaces/${fx.workspaceId}/price-sheets`;

beforeAll(async () => {
  server = await startTestServer();
  fx = await createWorkspaceFixture(server.deps.db, server.url);
});
afterAll(() => server?.close());

// Invented prices, no real printer's data.
const sheet = {
  name: 'Harbour demo sheet (invented)',
  currency: 'EUR',
  tiers: [
    { maxCards: 126, pricePerSet: 15.4 },
    { maxCards: 54, pricePerSet: 8.75 },
    { maxCards: 108, pricePerSet: 13.2 },
  ],
  setupFee: 30,
  setupWaivedAtSets: 12,
  stocks: [
    { name: 'Smooth', surchargePerSet: 0 },
    { name: 'Linen', surchargePerSet: 1.35 },
  ],
};

describe('price sheets', () => {
  it('a maker creates, reads, changes and deletes a price sheet', async () => {
    const maker = fx.actors.maker;
    const created = await maker.post(base(), sheet);
    expect(created.status).toBe(201);
    const id = created.body.priceSheet.id as string;
    expect(created.body.priceSheet).toMatchObject({ ...sheet, id });

    const read = await fx.actors.helper.get(`${base()}/${id}`);
    expect(read.status).toBe(200);
    expect(read.body.priceSheet.setupFee).toBe(30); // a number, not pg's numeric text
    expect((await fx.actors.helper.get(base())).body.priceSheets.map((s: PriceSheet) => s.id)).toContain(id);

    const changed = await maker.patch(`${base()}/${id}`, { ...sheet, setupFee: 12.5, setupWaivedAtSets: null });
    expect(changed.status).toBe(200);
    expect(changed.body.priceSheet).toMatchObject({ setupFee: 12.5, setupWaivedAtSets: null });
    expect(Date.parse(changed.body.priceSheet.updatedAt)).toBeGreaterThanOrEqual(Date.parse(created.body.priceSheet.updatedAt));

    expect((await maker.delete(`${base()}/${id}`)).status).toBe(204);
    expect((await maker.get(`${base()}/${id}`)).status).toBe(404);
  });

  it('answers 400 VALIDATION with every problem and its dotted path', async () => {
    const res = await fx.actors.owner.post(base(), {
      ...sheet,
      name: '',
      currency: 'euro',
      tiers: [
        { maxCards: 54, pricePerSet: 8.755 },
        { maxCards: 54, pricePerSet: -1 },
      ],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('VALIDATION');
    const paths = res.body.error.details.map((d: { path: string }) => d.path);
    expect(paths).toEqual(expect.arrayContaining(['name', 'currency', 'tiers.0.pricePerSet', 'tiers.1.pricePerSet']));
    const noTiers = await fx.actors.owner.post(base(), { ...sheet, tiers: [] });
    expect(noTiers.body.error.details).toEqual([{ path: 'tiers', message: 'needs at least one deck size' }]);
    const twice = await fx.actors.owner.post(base(), { ...sheet, name: 'Twice', tiers: [sheet.tiers[0], sheet.tiers[0]] });
    expect(twice.body.error.details).toEqual([{ path: 'tiers.1.maxCards', message: 'is listed twice' }]);
  });

  it('refuses a second sheet with the same name (409) and keeps the first', async () => {
    const first = await fx.actors.owner.post(base(), { ...sheet, name: 'Only once' });
    expect(first.status).toBe(201);
    const again = await fx.actors.maker.post(base(), { ...sheet, name: 'Only once', setupFee: 1 });
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('PRICE_SHEET_NAME_TAKEN');
    expect((await fx.actors.owner.get(`${base()}/${first.body.priceSheet.id}`)).body.priceSheet.setupFee).toBe(30);
  });

  it('hides a sheet from another workspace, even from that workspace’s owner', async () => {
    const id = (await fx.actors.owner.post(base(), { ...sheet, name: 'Private' })).body.priceSheet.id;
    const outsider = fx.actors.outsider;
    const elsewhere = `/api/workspaces/${fx.otherWorkspaceId}/price-sheets/${id}`;
    expect((await outsider.get(elsewhere)).status).toBe(404);
    expect((await outsider.patch(elsewhere, sheet)).status).toBe(404);
    expect((await outsider.delete(elsewhere)).status).toBe(404);
    expect((await outsider.get(`/api/workspaces/${fx.otherWorkspaceId}/price-sheets`)).body.priceSheets).toEqual([]);
    expect((await fx.actors.owner.get(`${base()}/${id}`)).body.priceSheet.name).toBe('Private');
    expect((await fx.actors.owner.get(`${base()}/not-a-uuid`)).status).toBe(404);
  });

  it('what is stored prices an order: 110 cards pad to 126 at 18 a sheet, fee waived at 12 sets', async () => {
    const stored = (await fx.actors.owner.post(base(), { ...sheet, name: 'For pricing' })).body.priceSheet as PriceSheet;
    // 110 -> 126 at 18 a sheet: common practice, no source (DESIGN.md).
    const eleven = planPrint({ faces: 110, sheetMultiple: 18, sets: 11, priceSheet: priceTermsOf(stored), stock: 'Linen' });
    expect(eleven.paddedSize).toBe(126);
    expect(eleven.pricing?.tier).toEqual({ maxCards: 126, pricePerSet: 15.4 });
    expect(eleven.pricing?.total).toBe(Math.round(((15.4 + 1.35) * 11 + 30) * 100) / 100);
    const twelve = planPrint({ faces: 110, sheetMultiple: 18, sets: 12, priceSheet: priceTermsOf(stored), stock: 'Linen' });
    expect(twelve.pricing?.setupWaived).toBe(true);
    expect(twelve.pricing?.total).toBe(201);
  });

  it('the demo seed adds one invented price sheet, once', async () => {
    const { workspaceId } = await seedDemo(server.deps.db);
    await seedDemo(server.deps.db);
    const demo = (await listPriceSheets(server.deps.db, workspaceId)).filter((s) => s.name === DEMO_PRICE_SHEET.name);
    expect(demo).toHaveLength(1);
    expect(demo[0]!.tiers.length).toBeGreaterThan(2);
    expect(demo[0]!.name).toContain('invented');
  });
});
