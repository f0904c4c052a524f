// A run's deck by press sheets: where each sheet starts, which slots are padding, copies counted.
import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { ChoiceField } from '../../../components/fields';
import { ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { plural } from '../../../components/format';
import { useRunDeck } from '../api/use-run-deck';
import { DeckView } from './deck-view';

export function DeckPage() {
  const { workspaceId = '', runId = '' } = useParams();
  const { deck, isPending, error } = useRunDeck(workspaceId, runId);
  const [multiple, setMultiple] = useState<number | null>(null);
  if (error) return <ErrorNote error={error} />;
  if (isPending || !deck) return <Loading what="the deck" />;
  const sheetMultiple = multiple ?? deck.settings.sheet.multiple;
  // A back is printed on the reverse, not in a slot of the press sheet (DESIGN.md "sheet"). Interleaved,
  // every face's back (or blank) is the PDF page after it and is drawn on its face's slot; otherwise the
  // common back's page is shown apart.
  const interleaved = deck.settings.back.placement === 'interleaved';
  const faces = interleaved ? deck.entries.filter((_, i) => i % 2 === 0) : deck.entries.filter((e) => !(e.kind === 'back' && !e.padding));
  const backPages = interleaved ? deck.entries.filter((e, i) => i % 2 === 1 && e.kind === 'back') : deck.entries.filter((e) => e.kind === 'back' && !e.padding);
  const fronts = faces.filter((e) => e.kind === 'front' && !e.padding);
  const distinct = new Set(fronts.map((e) => e.source)).size;
  const padding = deck.entries.filter((e) => e.padding).length;
  return (
    <>
      <PageHeader eyebrow="Run · deck" title={`${deck.run.recipe.name} on ${deck.run.artSet.name}`}>
        <nav aria-label="Run views" className="flex gap-4 text-sm font-semibold">
          <Link to=".." relative="path" className="text-cut underline-offset-4 hover:underline">
            Run
          </Link>
          <Link to="../plan" relative="path" className="text-cut underline-offset-4 hover:underline">
            Plan the print
          </Link>
        </nav>
      </PageHeader>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_18rem]">
        <Panel title="Print order">
          {faces.length === 0 ? (
            <p className="text-sm text-ink-soft">No card was produced yet.</p>
          ) : (
            <DeckView workspaceId={workspaceId} runId={runId} entries={faces} multiple={sheetMultiple} />
          )}
          {backPages.length > 0 && (
            <p className="mt-4 text-sm text-ink-soft" data-testid="deck-backs">
              {interleaved
                ? `Each card's back is shown in the corner of its slot. In the PDF it is the page after its front (${plural(backPages.length, 'back page')}); backs print on the reverse, not in extra slots.`
                : `The back (${backPages[0]!.source?.split('/').pop()}) is page ${backPages[0]!.seq} of ${deck.entries.length} in the PDF, printed on the reverse of every card.`}
            </p>
          )}
        </Panel>
        <Panel title="Counts">
          <dl className="grid grid-cols-2 gap-3 text-sm" data-testid="deck-counts">
            <dt className="text-ink-soft">Slots</dt>
            <dd className="font-mono">{faces.length}</dd>
            <dt className="text-ink-soft">Card faces (copies counted)</dt>
            <dd className="font-mono">{fronts.length}</dd>
            <dt className="text-ink-soft">Different cards</dt>
            <dd className="font-mono">{distinct}</dd>
            <dt className="text-ink-soft">Padding</dt>
            <dd className="font-mono">{padding}</dd>
            <dt className="text-ink-soft">Back pages</dt>
            <dd className="font-mono">{backPages.length}</dd>
            <dt className="text-ink-soft">Press sheets</dt>
            <dd className="font-mono">{Math.ceil(faces.length / Math.max(1, sheetMultiple))}</dd>
          </dl>
          <div className="mt-4">
            <ChoiceField label="Outline sheets of" value={sheetMultiple} onChange={(e) => setMultiple(Number(e.target.value))}>
              {[...new Set([deck.settings.sheet.multiple, 9, 18, 36, 54, 55])].sort((a, b) => a - b).map((m) => (
                <option key={m} value={m}>
                  {plural(m, 'card')}
                  {m === deck.settings.sheet.multiple ? ' (recipe)' : ''}
                </option>
              ))}
            </ChoiceField>
          </div>
          <p className="mt-4 text-xs text-ink-soft">
            Amber slots are padding to reach the sheet multiple ({deck.settings.sheet.pad === 'none' ? 'this recipe adds none' : `filled with: ${deck.settings.sheet.pad}`}).
            Select a card to inspect it at full size.
          </p>
        </Panel>
      </div>
    </>
  );
}
