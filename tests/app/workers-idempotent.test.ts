// pg-boss delivers at least once (REFERENCES.md "pg-boss 10"): a retried render, plan or assemble must
// give the same bytes and no duplicate rows, and a stale attempt must not overwrite a newer result.
import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { describe, expect, it } from 'vitest';
import { assembleRun } from '../../jobs/runs/assemble.ts';
import { planRun } from '../../jobs/runs/plan.ts';
import { renderRunCard } from '../../jobs/runs/render.ts';
import { runsRuntime } from '../../jobs/runs/runtime.ts';
import type { RunningServer } from '../../server/server.ts';
import { storageKeys } from '../../server/storage.ts';
import type { WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, useRunsWorkspace, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ server, fx, api } = w));

const sha = async (file: string) => createHash('sha256').update(await readFile(file)).digest('hex');
// The bundle as a helper downloads it (composed from stored parts: server/composed-zip.ts).
const bundleSha = async (runId: string) => {
  const res = await fetch(`${server.url}${api}/runs/${runId}/files/bundle.zip`, { headers: { Cookie: fx.actors.maker.cookie! } });
  expect(res.status).toBe(200);
  return createHash('sha256').update(Buffer.from(await res.arrayBuffer())).digest('hex');
};

describe('retried jobs', () => {
  it('a second delivery of every job changes no bytes and adds no rows', async () => {
    const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Retry deck') })).body.recipe;
    const zip = await readFile(await zipOf(await cardSet(3)));
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'retry.zip', data: zip }])).body.artSet;
    const runId = (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id })).body.run.id;
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
    expect(run.state).toBe('done');
    const db = server.deps.db;
    const storage = server.deps.runs.storage;
    const cards = await db('run_cards').where({ run_id: runId }).orderBy('seq');
    const card = cards[0];
    const renderFile = storage.path(card.info.renderKey);
    const layoutFile = storage.path(`${storageKeys.runFile(fx.workspaceId, runId, 'bundle.zip')}.parts.json`);
    const before = { render: await sha(renderFile), bundle: await bundleSha(runId), layout: await sha(layoutFile) };

    // A settled card: a late delivery of its render job does nothing at all.
    await renderRunCard(runsRuntime(), card.id, false);
    expect((await db('render_log').where({ card_id: card.id })).length).toBe(1);

    // A crashed attempt left the card "rendering": the retry renders it again to the same bytes.
    await db('run_cards').where({ id: card.id }).update({ state: 'rendering' });
    await db('runs').where({ id: runId }).update({ state: 'running' });
    await renderRunCard(runsRuntime(), card.id, false);
    expect(await sha(renderFile)).toBe(before.render);
    expect((await db('run_cards').where({ id: card.id }).first()).state).toBe('done');
    const { recipe_version_id } = await db('runs').where({ id: runId }).first();
    expect((await db('render_cache').where({ recipe_version_id })).length).toBe(3);

    // Plan and assemble again: same card rows, same bundle bytes, still done.
    await planRun(runsRuntime(), runId);
    await assembleRun(runsRuntime(), runId);
    expect((await db('run_cards').where({ run_id: runId })).length).toBe(3);
    expect(await sha(layoutFile)).toBe(before.layout);
    expect(await bundleSha(runId)).toBe(before.bundle);
    expect((await db('runs').where({ id: runId }).first()).state).toBe('done');
    await assembleRun(runsRuntime(), runId); // a run already done is left alone
    expect((await db('runs').where({ id: runId }).first()).state).toBe('done');
  });
});
