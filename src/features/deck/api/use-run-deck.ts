// A finished run's deck in print order: the run, its cards, the recipe version it pinned, and
// `planDeck` from shared/deck.ts applied to them so padding and backs sit where the PDF puts them.
import { useMemo } from 'react';
import { planDeck, type DeckPlan, type DeckSlot, type ManifestRow } from '../../../../shared/deck';
import type { Recipe } from '../../../../shared/recipe';
import { isTerminalRunState } from '../../../../shared/run-states';
import { useRun } from '../../runs/api/get-run';
import { useRunCards } from '../../runs/api/get-run-cards';
import type { RunCard, RunDetail } from '../../runs/api/types';
import { useRecipeVersion } from '../../recipes/api/get-recipe-version';

export type DeckEntry = DeckSlot & { card: RunCard | null; copies: number };

export type RunDeck = {
  run: RunDetail;
  cards: RunCard[];
  settings: Recipe;
  plan: DeckPlan;
  entries: DeckEntry[];
};

/** Copies of a front: one output file per copy when singles were written, else one. */
export const copiesOf = (card: RunCard) => Math.max(1, card.outputs.length);

export function buildDeck(cards: RunCard[], settings: Recipe, run: RunDetail): RunDeck {
  const fronts = cards.filter((c) => c.role === 'front' && c.state === 'done').sort((a, b) => a.seq - b.seq);
  // The run's card order is already the print order: hand it over as manifest order.
  const manifest: ManifestRow[] = fronts.map((c, i) => ({ file: c.source, copies: copiesOf(c), back: null, title: null, row: i + 1 }));
  const plan = planDeck({ cards: fronts.map((c) => c.source), recipe: { ...settings, order: 'manifest' }, manifest });
  const frontBySource = new Map(fronts.map((c) => [c.source, c]));
  const backBySource = new Map(cards.filter((c) => c.role === 'back').map((c) => [c.source, c]));
  const entries = plan.slots.map((slot) => {
    const card = slot.source === null ? null : ((slot.kind === 'back' ? backBySource.get(slot.source) : frontBySource.get(slot.source)) ?? frontBySource.get(slot.source) ?? null);
    return { ...slot, card, copies: card && slot.kind === 'front' ? copiesOf(card) : 1 };
  });
  return { run, cards, settings, plan, entries };
}

export function useRunDeck(workspaceId: string, runId: string) {
  const run = useRun(workspaceId, runId);
  const cards = useRunCards(workspaceId, runId, null, run.data ? !isTerminalRunState(run.data.state) : false);
  const version = useRecipeVersion(workspaceId, run.data?.recipe.id ?? '', run.data ? run.data.recipe.version : null);
  const deck = useMemo(
    () => (run.data && cards.data && version.data ? buildDeck(cards.data, version.data.settings, run.data) : null),
    [run.data, cards.data, version.data],
  );
  return {
    deck,
    isPending: run.isPending || cards.isPending || (run.data !== undefined && version.isPending),
    error: run.error ?? cards.error ?? version.error,
  };
}
