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

/** A slot of the deck with its card; for a front, the copies the deck holds and (interleaved) the back slot after it. */
export type DeckEntry = DeckSlot & { card: RunCard | null; copies: number; back: DeckEntry | null };

export type RunDeck = {
  run: RunDetail;
  cards: RunCard[];
  settings: Recipe;
  plan: DeckPlan;
  entries: DeckEntry[];
};

/**
 * Copies of a front as the engine planned them (stored when the run was planned). Runs planned before
 * that was stored have none: count one output file per copy when singles were written, else one.
 */
export const copiesOf = (card: RunCard) => card.copies ?? Math.max(1, card.outputs.length);

/**
 * The engine's deck from the cards API: fronts in the engine's order with their copies and backs, only
 * the cards that were produced (as the engine does when it writes the PDF), then `planDeck`.
 */
export function buildDeck(cards: RunCard[], settings: Recipe, run: RunDetail): RunDeck {
  const byId = new Map(cards.map((c) => [c.id, c]));
  const produced = (c: RunCard | undefined) => (c && c.state === 'done' ? c : null);
  const fronts = cards
    .filter((c) => c.role === 'front' && c.state === 'done')
    .sort((a, b) => (a.deckOrder ?? a.seq) - (b.deckOrder ?? b.seq) || a.seq - b.seq);
  const backBySource = new Map(cards.filter((c) => c.role === 'back').map((c) => [c.source, c]));
  const commonBack = settings.back.art && produced(backBySource.get(settings.back.art)) ? settings.back.art : null;
  // Handed over as manifest order: the API already gives the engine's order.
  const manifest: ManifestRow[] = fronts.map((c, i) => ({
    file: c.source,
    copies: copiesOf(c),
    back: c.back ? (produced(byId.get(c.back))?.source ?? null) : null,
    title: null,
    row: i + 1,
  }));
  const plan = planDeck({ cards: fronts.map((c) => c.source), recipe: { ...settings, order: 'manifest', back: { ...settings.back, art: commonBack } }, manifest });
  const frontBySource = new Map(fronts.map((c) => [c.source, c]));
  const entries: DeckEntry[] = plan.slots.map((slot) => {
    const card = slot.source === null ? null : ((slot.kind === 'back' ? backBySource.get(slot.source) : frontBySource.get(slot.source)) ?? frontBySource.get(slot.source) ?? null);
    return { ...slot, card, copies: card && slot.kind === 'front' ? copiesOf(card) : 1, back: null };
  });
  // Interleaved: each face's back (or blank) is the page right after it.
  if (settings.back.placement === 'interleaved') {
    for (let i = 0; i + 1 < entries.length; i += 2) entries[i]!.back = entries[i + 1]!;
  }
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
