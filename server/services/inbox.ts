// The inbox folder: a zip dropped into INBOX/<workspace-slug>/<recipe-slug>/ becomes an art set and a
// run started by the workspace's owner, once the file has stopped growing (chokidar awaitWriteFinish).
// The zip is then moved to done/ or failed/ beside it, with <name>.txt saying which run or why not.
import { copyFile, mkdir, rename, stat, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { watch, type FSWatcher } from 'chokidar';
import type { Knex } from 'knex';
import { isBleedwrightError } from '../../shared/errors.ts';
import type { Logger } from '../logger.ts';
import type { Storage } from '../storage.ts';
import { findRecipeBySlug } from '../db/recipes.ts';
import { findWorkspaceBySlug } from '../db/workspaces.ts';
import { AppError } from '../errors.ts';
import { importArtSetZip } from './art-sets.ts';
import { startRun, type SendJob } from './runs.ts';

export interface InboxDeps {
  db: Knex;
  storage: Storage;
  tmpDir: string;
  send: SendJob;
  logger: Logger;
}

export interface Inbox {
  /** Resolves when every file seen so far has been handled. */
  idle(): Promise<void>;
  close(): Promise<void>;
}

export type InboxOutcome = { ok: true; runId: string; artSetId: string } | { ok: false; reason: string };

/** Handles one dropped zip (already complete) and moves it to done/ or failed/. */
export async function handleInboxZip(deps: InboxDeps, root: string, file: string): Promise<InboxOutcome> {
  const rel = path.relative(root, file).split(path.sep);
  const [workspaceSlug, recipeSlug, name] = rel as [string, string, string];
  let outcome: InboxOutcome;
  try {
    const ws = await findWorkspaceBySlug(deps.db, workspaceSlug);
    if (!ws) throw new AppError(404, 'INBOX_WORKSPACE', `there is no workspace "${workspaceSlug}" (the first folder must be a workspace's slug)`);
    const recipe = await findRecipeBySlug(deps.db, ws.id, recipeSlug);
    if (!recipe) throw new AppError(404, 'INBOX_RECIPE', `workspace "${workspaceSlug}" has no recipe "${recipeSlug}" (the second folder must be a recipe's slug)`);
    const owner = await deps.db('memberships').where({ workspace_id: ws.id, role: 'owner' }).orderBy('created_at').first('user_id');
    await mkdir(deps.tmpDir, { recursive: true });
    const temp = path.join(deps.tmpDir, `inbox-${process.pid}-${randomBytes(8).toString('hex')}.zip`);
    await copyFile(file, temp);
    const imported = await importArtSetZip(deps, {
      workspaceId: ws.id,
      userId: owner?.user_id ?? null,
      tempFile: temp,
      name: name.replace(/\.zip$/i, ''),
      note: `From the inbox: ${name}`,
    });
    const runId = await startRun(deps, { workspaceId: ws.id, userId: owner?.user_id ?? null, recipeId: recipe.id, artSetId: imported.artSetId, revision: imported.revision });
    outcome = { ok: true, runId, artSetId: imported.artSetId };
  } catch (err) {
    const reason = isBleedwrightError(err) || err instanceof AppError ? `${err.code}: ${err.message}` : `INBOX_FAILED: ${(err as Error).message}`;
    if (!(isBleedwrightError(err) || err instanceof AppError)) deps.logger.error({ err, file }, 'inbox file failed');
    outcome = { ok: false, reason };
  }
  const folder = path.join(path.dirname(file), outcome.ok ? 'done' : 'failed');
  await mkdir(folder, { recursive: true });
  let target = path.join(folder, name);
  if (await exists(target)) target = path.join(folder, `${name.replace(/\.zip$/i, '')}-${Date.now()}.zip`);
  await rename(file, target);
  const text = outcome.ok
    ? `Started run ${outcome.runId} (art set ${outcome.artSetId}) from ${name}.\n`
    : `${name} was not used: ${outcome.reason}\n`;
  await writeFile(`${target.replace(/\.zip$/i, '')}.txt`, text);
  return outcome;
}

async function exists(p: string): Promise<boolean> {
  try {
    await stat(p);
    return true;
  } catch {
    return false;
  }
}

/** Watches `root`; files are handled one at a time, in the order they settle. */
export function startInbox(deps: InboxDeps, opts: { root: string; stableMs?: number; pollMs?: number }): Inbox {
  const root = path.resolve(opts.root);
  let chain: Promise<unknown> = mkdir(root, { recursive: true });
  const watcher: FSWatcher = watch(root, {
    depth: 2,
    ignoreInitial: false,
    awaitWriteFinish: { stabilityThreshold: opts.stableMs ?? 2000, pollInterval: opts.pollMs ?? 200 },
  });
  const pending = new Set<string>();
  watcher.on('add', (file) => {
    const rel = path.relative(root, file).split(path.sep);
    if (rel.length !== 3 || !/\.zip$/i.test(rel[2]!) || pending.has(file)) return;
    pending.add(file);
    chain = chain.then(() => handleInboxZip(deps, root, file).catch((err) => deps.logger.error({ err, file }, 'inbox')).finally(() => pending.delete(file)));
  });
  watcher.on('error', (err) => deps.logger.error({ err }, 'inbox watcher'));
  const ready = new Promise<void>((resolve) => watcher.once('ready', () => resolve()));
  return {
    async idle() {
      await ready;
      let seen: Promise<unknown>;
      do {
        seen = chain;
        await seen;
      } while (seen !== chain);
    },
    close: () => watcher.close(),
  };
}
