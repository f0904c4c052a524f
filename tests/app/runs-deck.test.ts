// The cards API carries the engine's deck plan (place in print order, copies, the back on each card's
// reverse), stored when the run is planned; and the first-run guide's "checked the proof" and
// "downloaded the PDF" steps are recorded per member by the server.
import { readFile } from 'node:fs/promises';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { planDeck } from '../../shared/deck.ts';
import { Actor, createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardPng, cardSet, smallRecipe, startRunsServer, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
let stop: () => Promise<void>;
let runId: string;
type Card = { id: string; source: string; role: 'front' | 'back'; state: string; deckOrder: number | null; copies: number | null; back: string | null };
let cards: Card[];

beforeAll(async () => {
  ({ server, stop } = await startRunsServer());
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
  // Manifest order differs from the natural order; card-03 has two copies and its own back, card-02 none
  // (left out of the deck), card-04 is not listed (it follows the listed ones); the rest get back-a.
  const manifest = ['file,copies,back,title', 'card-03.png,2,back-b.png,Third', 'card-01.png,1,,First', 'card-02.png,0,,Second', ''].join('\n');
  const files = { ...(await cardSet(4)), 'back-a.png': await cardPng(90, 1), 'back-b.png': await cardPng(91, 2), 'manifest.csv': Buffer.from(manifest) };
  const recipe = await fx.actors.maker.post(`${api}/recipes`, {
    settings: smallRecipe('Interleaved deck', { order: 'manifest', back: { art: 'back-a.png', placement: 'interleaved' }, sheet: { multiple: 1, pad: 'none' } }),
  });
  expect(recipe.status).toBe(201);
  const art = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'art.zip', data: await readFile(await zipOf(files)) }], { name: 'Interleaved art' });
  expect(art.status).toBe(201);
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.body.recipe.id, artSetId: art.body.artSet.id });
  expect(start.status).toBe(201);
  runId = start.body.run.id;
  const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
  expect(run.error ?? run.state).toBe('done');
  cards = (await fx.actors.helper.get(`${api}/runs/${runId}/cards`)).body.cards;
}, 120_000);
afterAll(() => stop?.());

describe('cards API: the deck as the engine planned it', () => {
  it('gives each front its place, copies and back card, as the manifest and recipe say', async () => {
    const bySource = new Map(cards.map((c) => [c.source, c]));
    const backA = bySource.get('back-a.png')!;
    const backB = bySource.get('back-b.png')!;
    expect(backA.role).toBe('back');
    expect(backB.role).toBe('back');
    const fronts = cards.filter((c) => c.role === 'front').sort((a, b) => a.deckOrder! - b.deckOrder!);
    expect(fronts.map((c) => [c.source, c.deckOrder, c.copies, c.back])).toEqual([
      ['card-03.png', 1, 2, backB.id],
      ['card-01.png', 2, 1, backA.id],
      ['card-02.png', 3, 0, backA.id],
      ['card-04.png', 4, 1, backA.id],
    ]);
    for (const b of [backA, backB]) expect([b.deckOrder, b.copies, b.back]).toEqual([null, null, null]);
  });

  it('agrees with the engine: report copies and the PDF page count', async () => {
    const report = await fx.actors.maker.get(`${api}/runs/${runId}/files/report.json`);
    expect(report.status).toBe(200);
    const reported = new Map((report.body.cards as Array<{ source: string; role: string; copies: number }>).filter((c) => c.role === 'front').map((c) => [c.source, c.copies]));
    for (const c of cards.filter((c) => c.role === 'front')) expect(c.copies).toBe(reported.get(c.source));

    // The deck rebuilt from the API's fields alone has as many pages as the engine's PDF: 4 faces, each followed by its back.
    const run = (await fx.actors.maker.get(`${api}/runs/${runId}`)).body.run;
    const source = new Map(cards.map((c) => [c.id, c.source]));
    const fronts = cards.filter((c) => c.role === 'front').sort((a, b) => a.deckOrder! - b.deckOrder!);
    const plan = planDeck({
      cards: fronts.map((c) => c.source),
      recipe: { order: 'manifest', back: { art: 'back-a.png', placement: 'interleaved' }, sheet: { multiple: 1, pad: 'none' } },
      manifest: fronts.map((c, i) => ({ file: c.source, copies: c.copies!, back: c.back ? source.get(c.back)! : null, title: null, row: i + 2 })),
    });
    expect(plan.slots.map((s) => s.source)).toEqual(['card-03.png', 'back-b.png', 'card-03.png', 'back-b.png', 'card-01.png', 'back-a.png', 'card-04.png', 'back-a.png']);
    expect(run.totals.pages).toBe(plan.slots.length);
  });
});

describe('first-run guide progress per member', () => {
  it('records a combined PDF download and a card opened at full size for that member only', async () => {
    const guide = async (who: 'maker' | 'helper') => (await fx.actors[who].get(`${api}/guide`)).body.guide;
    expect(await guide('maker')).toEqual({ proofChecked: false, pdfDownloaded: false });
    const run = (await fx.actors.maker.get(`${api}/runs/${runId}`)).body.run;
    const pdf = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;

    // Other files and thumbnails do not count.
    expect((await fx.actors.maker.get(`${api}/runs/${runId}/files/report.json`)).status).toBe(200);
    const front = cards.find((c) => c.role === 'front' && c.state === 'done')!;
    expect((await fx.actors.maker.get(`${api}/runs/${runId}/cards/${front.id}/image?size=thumb`)).status).toBe(200);
    expect(await guide('maker')).toEqual({ proofChecked: false, pdfDownloaded: false });

    expect((await fx.actors.maker.get(`${api}/runs/${runId}/files/${encodeURIComponent(pdf)}`)).status).toBe(200);
    expect(await guide('maker')).toEqual({ proofChecked: false, pdfDownloaded: true });
    expect((await fx.actors.maker.get(`${api}/runs/${runId}/cards/${front.id}/image?size=full`)).status).toBe(200);
    expect((await fx.actors.maker.get(`${api}/runs/${runId}/cards/${front.id}/image?size=full`)).status).toBe(200);
    expect(await guide('maker')).toEqual({ proofChecked: true, pdfDownloaded: true });
    // A fresh session of the same account (another browser) sees the same; another member sees nothing done.
    const again = await Actor.signedIn(server.url, fx.users.maker.email);
    expect((await again.get(`${api}/guide`)).body.guide).toEqual({ proofChecked: true, pdfDownloaded: true });
    expect(await guide('helper')).toEqual({ proofChecked: false, pdfDownloaded: false });
  });
});
