// The inbox folder: a zip dropped into INBOX/<workspace-slug>/<recipe-slug>/ becomes an art set and a
// run once it stops growing, then moves to done/ with a note; a garbage zip goes to failed/ with why.
import { copyFile, mkdir, mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, filesIn, smallRecipe, startRunsServer, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let stop: () => Promise<void>;
let inboxRoot: string;
let slug: string;

beforeAll(async () => {
  inboxRoot = await mkdtemp(path.join(tmpdir(), 'bw-inbox-'));
  ({ server, stop } = await startRunsServer({ inbox: { root: inboxRoot, stableMs: 300 } }));
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  slug = (await server.deps.db('workspaces').where({ id: fx.workspaceId }).first('slug')).slug;
});
afterAll(() => stop?.());

async function waitForFile(dir: string, pattern: RegExp, timeoutMs = 30_000): Promise<string> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    const hit = (await filesIn(dir)).find((f) => pattern.test(f));
    if (hit) return path.join(dir, hit);
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`nothing matching ${pattern} appeared in ${dir}`);
}

describe('inbox folder', () => {
  it('turns a dropped zip into an art set and a run, then files it under done/', async () => {
    const recipe = (await fx.actors.maker.post(`/api/workspaces/${fx.workspaceId}/recipes`, { settings: smallRecipe('Inbox deck') })).body.recipe;
    const folder = path.join(inboxRoot, slug, recipe.slug);
    await mkdir(folder, { recursive: true });
    // Written in two steps, like a slow copy: the watcher waits until the size stops changing.
    const zip = await readFile(await zipOf(await cardSet(3)));
    const target = path.join(folder, 'spring-batch.zip');
    await writeFile(target, zip.subarray(0, 100));
    await new Promise((r) => setTimeout(r, 100));
    await writeFile(target, zip);

    const note = await waitForFile(path.join(folder, 'done'), /^spring-batch\.txt$/);
    expect(await filesIn(path.join(folder, 'done'))).toContain('spring-batch.zip');
    expect(await filesIn(folder)).not.toContain('spring-batch.zip');
    const runId = /Started run ([0-9a-f-]{36})/.exec(await readFile(note, 'utf8'))![1]!;
    const run = await waitForRun(fx.actors.owner, fx.workspaceId, runId);
    expect(run.state).toBe('done');
    expect(run.recipe.id).toBe(recipe.id);
    expect(run.artSet.name).toBe('spring-batch');
    expect(run.createdBy).toBe(fx.users.owner.id);
    expect(run.progress.done).toBe(3);
  });

  it('moves a garbage zip to failed/ with the reason, and an unknown recipe too', async () => {
    const recipe = (await fx.actors.maker.post(`/api/workspaces/${fx.workspaceId}/recipes`, { settings: smallRecipe('Inbox bad deck') })).body.recipe;
    const folder = path.join(inboxRoot, slug, recipe.slug);
    await mkdir(folder, { recursive: true });
    const runsBefore = (await server.deps.db('runs').where({ workspace_id: fx.workspaceId })).length;
    await writeFile(path.join(folder, 'broken.zip'), 'not a zip at all');
    const why = await readFile(await waitForFile(path.join(folder, 'failed'), /^broken\.txt$/), 'utf8');
    expect(why).toMatch(/^broken\.zip was not used: ARCHIVE_UNREADABLE: /);
    expect(await filesIn(path.join(folder, 'failed'))).toContain('broken.zip');

    const nowhere = path.join(inboxRoot, slug, 'no-such-recipe');
    await mkdir(nowhere, { recursive: true });
    await copyFile(await zipOf(await cardSet(1)), path.join(nowhere, 'lost.zip'));
    const why2 = await readFile(await waitForFile(path.join(nowhere, 'failed'), /^lost\.txt$/), 'utf8');
    expect(why2).toMatch(/INBOX_RECIPE: .*no recipe "no-such-recipe"/);
    expect((await server.deps.db('runs').where({ workspace_id: fx.workspaceId })).length).toBe(runsBefore);
  });
});
