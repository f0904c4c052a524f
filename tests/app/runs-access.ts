// Access-table rows for the runs API (recipes, art sets, runs, share links), with the objects they act
// on made directly through the services so the table stays fast.
import { createHash } from 'node:crypto';
import { importArtSetZip } from '../../server/services/art-sets.ts';
import { createRecipe } from '../../server/services/recipes.ts';
import { hashToken } from '../../server/services/shares.ts';
import { storageKeys } from '../../server/storage.ts';
import type { AccessRow, RouteContext } from './access-table.ts';
import { cardPng, smallRecipe, zipOf } from './runs-fixtures.ts';

const MEMBERS = { anonymous: 401, outsider: 404, helper: 200, maker: 200, owner: 200 };
const PUBLIC = { anonymous: 200, outsider: 200, helper: 200, maker: 200, owner: 200 };
const WRITERS = (ok: number) => ({ anonymous: 401, outsider: 404, helper: 403, maker: ok, owner: ok });
const ws = (ctx: RouteContext) => `/api/workspaces/${ctx.fx.workspaceId}`;

async function recipeId(ctx: RouteContext): Promise<string> {
  return (await createRecipe(ctx.db, ctx.fx.workspaceId, ctx.fx.users.owner.id, smallRecipe(`Access deck ${Math.random().toString(36).slice(2, 7)}`))).id;
}

async function artSetId(ctx: RouteContext): Promise<string> {
  const tmpDir = ctx.server.deps.runs.config.tmpDir;
  // A distinct image each time, so uploads are not deduplicated into one another.
  const unique = await zipOf({ 'card-01.png': await cardPng(Math.floor(Math.random() * 1e6)) });
  const result = await importArtSetZip({ db: ctx.db, storage: ctx.server.deps.runs.storage, tmpDir }, { workspaceId: ctx.fx.workspaceId, userId: null, tempFile: unique, name: 'Access art' });
  return result.artSetId;
}

/** A run row as the jobs leave it: done with one card and a report, or still queued. */
export async function runFixture(ctx: RouteContext, state: 'done' | 'queued' = 'done'): Promise<{ runId: string; cardId: string }> {
  const recipe = await recipeId(ctx);
  const set = await artSetId(ctx);
  const version = await ctx.db('recipe_versions').where({ recipe_id: recipe }).first('id');
  const rev = await ctx.db('art_set_revisions').where({ art_set_id: set }).first('id');
  const storage = ctx.server.deps.runs.storage;
  const report = Buffer.from('{"cards":[]}\n');
  const [run] = await ctx.db('runs')
    .insert({
      workspace_id: ctx.fx.workspaceId,
      recipe_version_id: version.id,
      art_set_revision_id: rev.id,
      state,
      outputs: JSON.stringify(state === 'done' ? [{ name: 'report.json', kind: 'report-json', bytes: report.length }] : []),
      created_by: ctx.fx.users.maker.id,
    })
    .returning('id');
  await storage.put(storageKeys.runFile(ctx.fx.workspaceId, run.id, 'report.json'), report);
  const png = await cardPng(1);
  const renderKey = storageKeys.render(ctx.fx.workspaceId, version.id, createHash('sha256').update(png).digest('hex'));
  await storage.put(renderKey, png);
  const [card] = await ctx.db('run_cards')
    .insert({ run_id: run.id, seq: 1, source: 'card-01.png', role: 'front', state: state === 'done' ? 'done' : 'pending', source_sha256: 'x', info: JSON.stringify({ renderKey, findings: [] }) })
    .returning('id');
  return { runId: run.id, cardId: card.id };
}

export async function shareFixture(ctx: RouteContext): Promise<{ runId: string; shareId: string; token: string }> {
  const { runId } = await runFixture(ctx);
  const token = `access${Math.random().toString(36).slice(2)}${'a'.repeat(20)}`;
  const [row] = await ctx.db('share_links')
    .insert({ run_id: runId, token_hash: hashToken(token), expires_at: new Date(Date.now() + 3600_000), created_by: ctx.fx.users.owner.id })
    .returning('id');
  return { runId, shareId: row.id, token };
}

export const RUN_ROUTES: AccessRow[] = [
  { name: 'list recipes', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes` }), expect: MEMBERS },
  { name: 'create recipe', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes`, body: { settings: smallRecipe('Access new deck') } }), expect: WRITERS(201) },
  { name: 'recipe', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes/${await recipeId(ctx)}` }), expect: MEMBERS },
  { name: 'save recipe', method: 'PUT', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes/${await recipeId(ctx)}`, body: { settings: smallRecipe('Access saved') } }), expect: WRITERS(200) },
  { name: 'recipe version', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes/${await recipeId(ctx)}/versions/1` }), expect: MEMBERS },
  { name: 'duplicate recipe', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes/${await recipeId(ctx)}/duplicate` }), expect: WRITERS(201) },
  { name: 'archive recipe', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/recipes/${await recipeId(ctx)}/archive`, body: { archived: true } }), expect: WRITERS(200) },
  { name: 'list art sets', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/art-sets` }), expect: MEMBERS },
  // Sent as JSON without a file: writers get past the role check to UPLOAD_MISSING.
  { name: 'upload art set', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/art-sets` }), expect: WRITERS(400) },
  { name: 'art set', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/art-sets/${await artSetId(ctx)}` }), expect: MEMBERS },
  {
    name: 'art set thumbnail',
    method: 'GET',
    prepare: async (ctx) => ({ path: `${ws(ctx)}/art-sets/${await artSetId(ctx)}/revisions/1/thumbnail?path=card-01.png` }),
    expect: MEMBERS,
  },
  { name: 'add art set files', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/art-sets/${await artSetId(ctx)}/files` }), expect: WRITERS(400) },
  { name: 'list runs', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs` }), expect: MEMBERS },
  {
    name: 'start run',
    method: 'POST',
    prepare: async (ctx) => ({ path: `${ws(ctx)}/runs`, body: { recipeId: await recipeId(ctx), artSetId: await artSetId(ctx) } }),
    expect: WRITERS(201),
  },
  { name: 'run', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}` }), expect: MEMBERS },
  // Server-sent events; a finished run sends its detail once and ends the stream.
  { name: 'run events', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/events` }), expect: MEMBERS },
  { name: 'run cards', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/cards` }), expect: MEMBERS },
  { name: 'first-run guide progress', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/guide` }), expect: MEMBERS },
  {
    name: 'card image',
    method: 'GET',
    prepare: async (ctx) => {
      const { runId, cardId } = await runFixture(ctx);
      return { path: `${ws(ctx)}/runs/${runId}/cards/${cardId}/image?size=full` };
    },
    expect: MEMBERS,
  },
  // The maker cancels the queued run; the owner then finds it already canceled.
  { name: 'cancel run', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx, 'queued')).runId}/cancel` }), expect: { ...WRITERS(200), owner: 409 } },
  { name: 'follow run', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/follow`, body: { follow: true } }), expect: MEMBERS },
  { name: 'run file', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/files/report.json` }), expect: MEMBERS },
  { name: 'list shares', method: 'GET', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/shares` }), expect: WRITERS(200) },
  { name: 'create share', method: 'POST', prepare: async (ctx) => ({ path: `${ws(ctx)}/runs/${(await runFixture(ctx)).runId}/shares`, body: { expiresInHours: 2 } }), expect: WRITERS(201) },
  {
    name: 'revoke share',
    method: 'DELETE',
    prepare: async (ctx) => {
      const s = await shareFixture(ctx);
      return { path: `${ws(ctx)}/runs/${s.runId}/shares/${s.shareId}` };
    },
    expect: WRITERS(204),
  },
  { name: 'public share', method: 'GET', prepare: async (ctx) => ({ path: `/api/share/${(await shareFixture(ctx)).token}` }), expect: PUBLIC },
  { name: 'public share file', method: 'GET', prepare: async (ctx) => ({ path: `/api/share/${(await shareFixture(ctx)).token}/files/report.json` }), expect: PUBLIC },
];
