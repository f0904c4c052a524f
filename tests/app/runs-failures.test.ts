// When things go wrong: an unreadable card is skipped and the run goes on; a recipe naming a missing
// back fails the plan; unwritable run storage fails the assembly with a clear error, and a new run
// succeeds once it is fixed; another workspace reaches none of it.
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { storageKeys } from '../../server/storage.ts';
import type { WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, useRunsWorkspace, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ server, fx, api } = w));

async function setup(name: string, files: Record<string, Buffer>, extra = {}) {
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name, extra) })).body.recipe;
  const zip = await readFile(await zipOf(files));
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${name}.zip`, data: zip }])).body.artSet;
  return { recipe, art };
}

const start = async (recipeId: string, artSetId: string) => (await fx.actors.maker.post(`${api}/runs`, { recipeId, artSetId })).body.run.id as string;

describe('runs that meet bad input', () => {
  it('skips an unreadable card with the engine finding and finishes the rest', async () => {
    const { recipe, art } = await setup('Broken card deck', { ...(await cardSet(2)), 'card-03.png': Buffer.from('this is not a png') });
    expect(art.entries.find((e: { path: string }) => e.path === 'card-03.png')).toMatchObject({ width: null, height: null, format: null });
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, await start(recipe.id, art.id));
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: 3, done: 2, skipped: 1 });
    expect(run.findings.error).toBe(1);
    const bad = (await fx.actors.maker.get(`${api}/runs/${run.id}/cards?severity=error`)).body.cards;
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ source: 'card-03.png', state: 'skipped' });
    expect(['NOT_AN_IMAGE', 'UNREADABLE', 'TRUNCATED']).toContain(bad[0].findings[0].code);
    expect(run.totals.pages).toBe(2);
  });

  it('fails the plan when the recipe names a back the art set does not have', async () => {
    const { recipe, art } = await setup('Missing back deck', await cardSet(2), { back: { art: 'back.png', placement: 'last' } });
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, await start(recipe.id, art.id));
    expect(run.state).toBe('failed');
    expect(run.error).toMatch(/^BACK_MISSING: back\.art "back\.png" is not in the art set/);
  });

  it('fails with a clear error when the run folder cannot be written, and a new run then succeeds', async () => {
    const { recipe, art } = await setup('Blocked storage deck', await cardSet(3));
    const runId = await start(recipe.id, art.id);
    // A plain file where the run's folder must go: every write into it fails (ENOTDIR).
    const blocker = server.deps.runs.storage.path(storageKeys.runDir(fx.workspaceId, runId));
    await mkdir(path.dirname(blocker), { recursive: true });
    await writeFile(blocker, 'in the way');
    const failed = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
    expect(failed.state).toBe('failed');
    expect(failed.error).toMatch(/^ASSEMBLE_FAILED: /);
    expect(failed.outputs).toEqual([]);
    let mail;
    for (let i = 0; i < 100 && !mail; i++) {
      mail = server.mailCatcher!.list().find((m) => m.text.includes(runId));
      if (!mail) await new Promise((r) => setTimeout(r, 50));
    }
    expect(mail?.subject).toMatch(/^Run failed:/);
    expect(mail?.text).toContain('What went wrong: ASSEMBLE_FAILED');
    await rm(blocker);
    const again = await waitForRun(fx.actors.maker, fx.workspaceId, await start(recipe.id, art.id));
    expect(again.state).toBe('done');
    expect(again.progress.cached).toBe(3); // the renders of the failed run were kept
  });

  it('keeps every run, card and file out of reach of another workspace', async () => {
    const { recipe, art } = await setup('Private deck', await cardSet(1));
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, await start(recipe.id, art.id));
    const cardId = (await fx.actors.maker.get(`${api}/runs/${run.id}/cards`)).body.cards[0].id;
    const other = `/api/workspaces/${fx.otherWorkspaceId}`;
    const outsider = fx.actors.outsider;
    for (const p of [
      `${other}/runs/${run.id}`,
      `${other}/runs/${run.id}/cards`,
      `${other}/runs/${run.id}/cards/${cardId}/image`,
      `${other}/runs/${run.id}/files/bundle.zip`,
      `${other}/recipes/${recipe.id}`,
      `${other}/art-sets/${art.id}`,
      `${other}/art-sets/${art.id}/revisions/1/thumbnail?path=card-01.png`,
    ]) {
      expect((await outsider.get(p)).status, p).toBe(404);
    }
    expect((await outsider.post(`${other}/runs`, { recipeId: recipe.id, artSetId: art.id })).status).toBe(404);
    expect((await outsider.get(`${other}/runs`)).body.runs).toEqual([]);
  });
});
