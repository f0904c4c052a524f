// Recipes through the API: versions on save, runs pin their version, duplicate, archive, and the
// 400 VALIDATION answer with dotted field paths a form can show inline.
import { describe, expect, it } from 'vitest';
import type { WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, useRunsWorkspace, upload, waitForRun, zipOf } from './runs-fixtures.ts';
import { readFile } from 'node:fs/promises';

let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ fx, api } = w));

describe('recipes', () => {
  it('makes a new version on each changed save and none for an unchanged one', async () => {
    const created = await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Saltmarsh deck') });
    expect(created.status).toBe(201);
    const r = created.body.recipe;
    expect(r).toMatchObject({ slug: 'saltmarsh-deck', name: 'Saltmarsh deck', version: 1, archived: false });
    expect(r.settings.bleed).toEqual({ size: 0.125, unit: 'in' }); // defaults applied
    expect(r.versions).toHaveLength(1);

    const same = await fx.actors.maker.request('PUT', `${api}/recipes/${r.id}`, { settings: smallRecipe('Saltmarsh deck') });
    expect(same.status).toBe(200);
    expect(same.body.recipe.version).toBe(1);

    const changed = await fx.actors.owner.request('PUT', `${api}/recipes/${r.id}`, { settings: smallRecipe('Saltmarsh deck', { dpi: 150 }) });
    expect(changed.body.recipe.version).toBe(2);
    expect(changed.body.recipe.versions.map((v: { version: number }) => v.version)).toEqual([2, 1]);
    expect((await fx.actors.helper.get(`${api}/recipes/${r.id}/versions/1`)).body.settings.dpi).toBe(100);
    expect((await fx.actors.helper.get(`${api}/recipes/${r.id}/versions/2`)).body.settings.dpi).toBe(150);
    expect((await fx.actors.helper.get(`${api}/recipes/${r.id}/versions/3`)).status).toBe(404);

    // A second recipe of the same name gets its own slug.
    const twin = await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Saltmarsh deck') });
    expect(twin.body.recipe.slug).toBe('saltmarsh-deck-2');
  });

  it('answers 400 VALIDATION with every field path', async () => {
    const bad = await fx.actors.maker.post(`${api}/recipes`, { settings: { name: '', dpi: 20, bleed: { size: -1, unit: 'in' } } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('VALIDATION');
    const paths = bad.body.error.details.map((d: { path: string }) => d.path);
    expect(paths).toEqual(expect.arrayContaining(['settings.name', 'settings.dpi', 'settings.bleed.size']));
    for (const d of bad.body.error.details) expect(typeof d.message).toBe('string');
  });

  it('pins the version a run used; later saves do not change it', async () => {
    const r = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Pinned deck') })).body.recipe;
    const zip = await readFile(await zipOf(await cardSet(2)));
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'pin.zip', data: zip }])).body.artSet;
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: r.id, artSetId: art.id });
    await fx.actors.maker.request('PUT', `${api}/recipes/${r.id}`, { settings: smallRecipe('Pinned deck', { dpi: 120 }) });
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id);
    expect(run.state).toBe('done');
    expect(run.recipe.version).toBe(1);
    const second = await fx.actors.maker.post(`${api}/runs`, { recipeId: r.id, artSetId: art.id });
    expect(second.body.run.recipe.version).toBe(2);
    await waitForRun(fx.actors.maker, fx.workspaceId, second.body.run.id);
  });

  it('duplicates and archives', async () => {
    const r = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Ember tarot', { trim: 'tarot' }) })).body.recipe;
    const dup = await fx.actors.maker.post(`${api}/recipes/${r.id}/duplicate`);
    expect(dup.status).toBe(201);
    expect(dup.body.recipe).toMatchObject({ name: 'Ember tarot (copy)', slug: 'ember-tarot-copy', version: 1 });
    expect(dup.body.recipe.settings.trim).toBe('tarot');

    const archived = await fx.actors.maker.post(`${api}/recipes/${r.id}/archive`, { archived: true });
    expect(archived.body.recipe.archived).toBe(true);
    const active = (await fx.actors.helper.get(`${api}/recipes`)).body.recipes.map((x: { id: string }) => x.id);
    const old = (await fx.actors.helper.get(`${api}/recipes?archived=true`)).body.recipes.map((x: { id: string }) => x.id);
    expect(active).not.toContain(r.id);
    expect(old).toContain(r.id);
    const zip = await readFile(await zipOf(await cardSet(1)));
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'a.zip', data: zip }])).body.artSet;
    expect((await fx.actors.maker.post(`${api}/runs`, { recipeId: r.id, artSetId: art.id })).body.error.code).toBe('RECIPE_ARCHIVED');
    const restored = await fx.actors.maker.post(`${api}/recipes/${r.id}/archive`, { archived: false });
    expect(restored.body.recipe.archived).toBe(false);
  });
});
