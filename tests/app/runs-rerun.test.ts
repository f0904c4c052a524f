// Rerun after art fixes: 40 small images, then a new revision with 3 replaced. The second run renders
// exactly those 3 (the rest come from the render cache keyed by source hash and recipe version) and
// its diff names them.
import { readFile } from 'node:fs/promises';
import { describe, expect, it } from 'vitest';
import { ENGINE_TAG } from '../../jobs/engine/run.ts';
import type { RunningServer } from '../../server/server.ts';
import type { WorkspaceFixture } from './fixtures.ts';
import { cardPng, cardSet, smallRecipe, useRunsWorkspace, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ server, fx, api } = w));

const renders = async (runId: string) => (await server.deps.db('render_log').where({ run_id: runId })).length;

describe('rerun after art fixes', () => {
  it('renders only the 3 changed cards of 40 and reports the diff', async () => {
    const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Lighthouse keepers', { dpi: 72 }) })).body.recipe;
    const zip = await readFile(await zipOf(await cardSet(40)));
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'keepers.zip', data: zip }])).body.artSet;

    const first = await waitForRun(fx.actors.maker, fx.workspaceId, (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id })).body.run.id);
    expect(first.state).toBe('done');
    expect(await renders(first.id)).toBe(40);
    expect(first.diff).toMatchObject({ previousRunId: null, added: [], changed: [], removed: [] });

    const fixed = ['card-07.png', 'card-21.png', 'card-33.png'];
    const parts = await Promise.all(fixed.map(async (name) => ({ field: 'files', name, data: await cardPng(Number(name.slice(5, 7)), 9) })));
    const rev = await upload(fx.actors.maker, `${api}/art-sets/${art.id}/files`, parts);
    expect(rev.status).toBe(201);
    expect(rev.body.artSet.revision).toBe(2);

    const second = await waitForRun(fx.actors.maker, fx.workspaceId, (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id })).body.run.id);
    expect(second.state).toBe('done');
    expect(second.artSet.revision).toBe(2);
    expect(await renders(second.id)).toBe(3);
    expect(second.progress).toMatchObject({ total: 40, done: 40, cached: 37 });
    expect(second.diff).toEqual({ previousRunId: first.id, added: [], changed: fixed, removed: [], unchanged: 37 });
    const cards = (await fx.actors.maker.get(`${api}/runs/${second.id}/cards`)).body.cards;
    expect(cards.filter((c: { cached: boolean }) => !c.cached).map((c: { source: string }) => c.source).sort()).toEqual(fixed);
    expect(second.totals.pages).toBe(40);

    // A new recipe version changes every render key: all 40 render again.
    await fx.actors.maker.request('PUT', `${api}/recipes/${recipe.id}`, { settings: smallRecipe('Lighthouse keepers', { dpi: 80 }) });
    const third = await waitForRun(fx.actors.maker, fx.workspaceId, (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id })).body.run.id);
    expect(third.state).toBe('done');
    expect(await renders(third.id)).toBe(40);
    expect(third.diff).toMatchObject({ previousRunId: second.id, changed: [], unchanged: 40 });

    // Renders cached by another engine (an older render version or libvips) are made again, not reused.
    const versionId = (await server.deps.db('runs').where({ id: third.id }).first()).recipe_version_id;
    const stale = await server.deps.db('render_cache').where({ recipe_version_id: versionId }).whereIn('source_path', fixed).update({ engine: 'older-engine' });
    expect(stale).toBe(3);
    const fourth = await waitForRun(fx.actors.maker, fx.workspaceId, (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id })).body.run.id);
    expect(fourth.state).toBe('done');
    expect(await renders(fourth.id)).toBe(3);
    expect(fourth.progress).toMatchObject({ total: 40, done: 40, cached: 37 });
    expect(await server.deps.db('render_cache').where({ recipe_version_id: versionId, engine: ENGINE_TAG })).toHaveLength(40);
  });
});
