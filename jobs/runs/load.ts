// Loading what a run job needs from its ids: the run, its pinned recipe version and art set zip.
import { openArtSet, type ArtSet } from '../engine/archive.ts';
import { recipeSchema, type Recipe } from '../../shared/recipe.ts';
import { findRevisionById } from '../../server/db/art-sets.ts';
import { findVersionById } from '../../server/db/recipes.ts';
import { findRun, type RunRow } from '../../server/db/runs.ts';
import { storageKeys } from '../../server/storage.ts';
import type { RunsRuntime } from './runtime.ts';

export interface LoadedRun {
  run: RunRow;
  recipe: Recipe;
  recipeVersionId: string;
  artSetId: string;
  /** Storage key of the art set's zip; workers fetch it into their own work folder. */
  zipKey: string;
}

// Recipe versions never change once saved, so parsed settings can be kept for the process's life.
const recipes = new Map<string, Recipe>();

export async function loadRun(rt: RunsRuntime, runId: string): Promise<LoadedRun | null> {
  const run = await findRun(rt.db, runId);
  if (!run) return null;
  let recipe = recipes.get(run.recipe_version_id);
  if (!recipe) {
    const version = await findVersionById(rt.db, run.recipe_version_id);
    if (!version) throw new Error(`recipe version ${run.recipe_version_id} of run ${runId} is missing`);
    recipe = recipeSchema.parse(version.settings);
    recipes.set(run.recipe_version_id, recipe);
  }
  const rev = await findRevisionById(rt.db, run.art_set_revision_id);
  if (!rev || rev.workspace_id !== run.workspace_id) throw new Error(`art set revision of run ${runId} is missing`);
  return {
    run,
    recipe,
    recipeVersionId: run.recipe_version_id,
    artSetId: rev.art_set_id,
    zipKey: storageKeys.blob(run.workspace_id, rev.sha256),
  };
}

/** What a render needs of its run that never changes once the run exists. */
export type RunFacts = Omit<LoadedRun, 'run'> & { runId: string; workspaceId: string };

// Renders of one run ask for the same facts 200 times: each process loads them once per run (two round
// trips saved per card). The run's state is not among them: the claim checks it.
const RUN_FACTS_KEPT = 32;
const facts = new Map<string, Promise<RunFacts | null>>();

export function loadRunFacts(rt: RunsRuntime, runId: string): Promise<RunFacts | null> {
  const kept = facts.get(runId);
  if (kept) return kept;
  const loading = loadRun(rt, runId).then((loaded) => {
    if (!loaded) return null;
    const { run, ...rest } = loaded;
    return { ...rest, runId: run.id, workspaceId: run.workspace_id };
  });
  facts.set(runId, loading);
  // A failed or missing load is not kept: the next card asks again.
  const forget = () => facts.get(runId) === loading && facts.delete(runId);
  loading.then((f) => f ?? forget(), forget);
  while (facts.size > RUN_FACTS_KEPT) facts.delete(facts.keys().next().value!);
  return loading;
}

/** Opens the run's zip from a local copy (the stored file itself on local disk; else fetched once). */
export async function openRunArtSet(rt: RunsRuntime, loaded: LoadedRun): Promise<ArtSet> {
  return openArtSet(await rt.storage.fetchFile(loaded.zipKey, rt.config.workDir));
}
