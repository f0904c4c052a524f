// One card of a run at full size: trim, bleed and safe lines toggled with the button or "g", arrow
// keys step through the run's cards, findings beside it, and where the card and its back sit in the deck.
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { SeverityBadge, StateBadge } from '../../../components/status';
import { recipeGeometry, type RecipeGeometry } from '../../../../shared/recipe';
import { cardImageUrl } from '../../runs/api/get-run';
import type { RunCard } from '../../runs/api/types';
import { useRunDeck, type DeckEntry } from '../../deck/api/use-run-deck';
import { CardLines } from './card-lines';

function isTyping(target: EventTarget | null): boolean {
  const el = target as HTMLElement | null;
  return !!el && (el.isContentEditable || ['INPUT', 'SELECT', 'TEXTAREA'].includes(el.tagName));
}

export function ProofViewerPage() {
  const { workspaceId = '', runId = '', cardId = '' } = useParams();
  const navigate = useNavigate();
  const { deck, isPending, error } = useRunDeck(workspaceId, runId);
  const [lines, setLines] = useState(true);
  const [actual, setActual] = useState(false);

  const ordered = useMemo(() => (deck ? [...deck.cards].sort((a, b) => a.seq - b.seq) : []), [deck]);
  const index = ordered.findIndex((c) => c.id === cardId);
  const card = index >= 0 ? ordered[index]! : null;
  const geometry = useMemo<RecipeGeometry | null>(() => {
    try {
      return deck ? recipeGeometry(deck.settings) : null;
    } catch {
      return null;
    }
  }, [deck]);

  // The card being moved to, ahead of the render: quick repeated arrow presses step one card each.
  const current = useRef(cardId);
  useEffect(() => {
    current.current = cardId;
  }, [cardId]);
  const go = useCallback(
    (step: number) => {
      const at = ordered.findIndex((c) => c.id === current.current);
      const next = at >= 0 ? ordered[at + step] : undefined;
      if (!next) return;
      current.current = next.id;
      navigate(`/w/${workspaceId}/runs/${runId}/cards/${next.id}`, { replace: true });
    },
    [ordered, navigate, workspaceId, runId],
  );

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.defaultPrevented || e.altKey || e.ctrlKey || e.metaKey || isTyping(e.target)) return;
      if (e.key === 'ArrowRight') {
        e.preventDefault();
        go(1);
      } else if (e.key === 'ArrowLeft') {
        e.preventDefault();
        go(-1);
      } else if (e.key === 'g' || e.key === 'G') {
        setLines((v) => !v);
      } else if (e.key === 'f' || e.key === 'F') {
        setActual((v) => !v);
      }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [go]);

  if (error) return <ErrorNote error={error} />;
  if (isPending || !deck) return <Loading what="the card" />;
  if (!card) return <ErrorNote error={new Error('This card is not part of the run.')} />;

  return (
    <>
      <PageHeader eyebrow={`Run · card ${index + 1} of ${ordered.length}`} title={card.source.split('/').pop() ?? card.source}>
        <nav aria-label="Run views" className="flex gap-4 text-sm font-semibold">
          <Link to="../.." relative="path" className="text-cut underline-offset-4 hover:underline">
            Run
          </Link>
          <Link to="../../deck" relative="path" className="text-cut underline-offset-4 hover:underline">
            Deck by sheets
          </Link>
        </nav>
      </PageHeader>
      <div className="mb-4 flex flex-wrap items-center gap-3">
        <Button tone="quiet" className="px-3 py-1" onClick={() => go(-1)} disabled={index <= 0} aria-keyshortcuts="ArrowLeft">
          ← Previous card
        </Button>
        <Button tone="quiet" className="px-3 py-1" onClick={() => go(1)} disabled={index >= ordered.length - 1} aria-keyshortcuts="ArrowRight">
          Next card →
        </Button>
        <Button tone={lines ? 'primary' : 'quiet'} className="px-3 py-1" aria-pressed={lines} aria-keyshortcuts="g" onClick={() => setLines((v) => !v)}>
          Trim, bleed and safe lines
        </Button>
        <Button tone="quiet" className="px-3 py-1" aria-pressed={actual} aria-keyshortcuts="f" onClick={() => setActual((v) => !v)}>
          {actual ? 'Fit to the window' : 'Actual pixels'}
        </Button>
        <p className="text-xs text-ink-soft">
          Keys: <kbd className="rounded border border-line bg-white px-1 font-mono">←</kbd> <kbd className="rounded border border-line bg-white px-1 font-mono">→</kbd> step ·{' '}
          <kbd className="rounded border border-line bg-white px-1 font-mono">g</kbd> lines · <kbd className="rounded border border-line bg-white px-1 font-mono">f</kbd> size
        </p>
        <p className="sr-only" aria-live="polite" data-testid="proof-position">
          Card {index + 1} of {ordered.length}: {card.source}
        </p>
      </div>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_22rem]">
        <Panel title={`Card ${card.seq}`}>
          <div className={actual ? 'max-h-[80vh] overflow-auto' : ''}>
            {card.state === 'done' ? (
              <div className="relative mx-auto w-fit" data-testid="proof-card" data-card-id={card.id} data-lines={String(lines)}>
                <img
                  key={card.id}
                  src={cardImageUrl(workspaceId, runId, card.id, 'full')}
                  alt={`Card ${card.seq}, ${card.source}, as printed with bleed`}
                  className={actual ? 'block max-w-none' : 'block max-h-[72vh] w-auto max-w-full'}
                  style={geometry && !actual ? { aspectRatio: `${geometry.pagePx.w} / ${geometry.pagePx.h}` } : undefined}
                />
                {lines && geometry && <CardLines g={geometry} />}
              </div>
            ) : (
              <p className="rounded-md bg-paper-deep p-6 text-sm" data-testid="proof-card" data-card-id={card.id}>
                No image: this card is <StateBadge state={card.state} />. Its findings say why.
              </p>
            )}
          </div>
          {lines && geometry && (
            <p className="mt-3 flex flex-wrap gap-4 text-xs text-ink-soft">
              <span><span className="mr-1 inline-block h-0.5 w-4 bg-cut align-middle" />trim {geometry.trimPx.w} x {geometry.trimPx.h} px</span>
              <span><span className="mr-1 inline-block h-2 w-4 bg-ink/35 align-middle" />bleed {geometry.bleedPx} px, cut away</span>
              <span><span className="mr-1 inline-block w-4 border-t-2 border-dashed border-proof align-middle" />safe {geometry.safePx} px inside</span>
            </p>
          )}
        </Panel>
        <div className="space-y-6">
          <FindingsPanel card={card} />
          <PlacePanel workspaceId={workspaceId} runId={runId} card={card} cards={deck.cards} entries={deck.entries} placement={deck.settings.back.placement} />
        </div>
      </div>
    </>
  );
}

function FindingsPanel({ card }: { card: RunCard }) {
  return (
    <Panel title="Findings">
      {card.findings.length === 0 ? (
        <p className="text-sm text-ink-soft" data-testid="card-findings">No findings: nothing to check on this card.</p>
      ) : (
        <ul className="space-y-2" data-testid="card-findings">
          {card.findings.map((f, i) => (
            <li key={i} className="text-sm">
              <SeverityBadge severity={f.severity}>{f.code}</SeverityBadge>
              <p className="mt-1">{f.message}</p>
            </li>
          ))}
        </ul>
      )}
      <dl className="mt-4 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-xs">
        <dt className="text-ink-soft">Source</dt>
        <dd className="break-all font-mono">{card.source}</dd>
        <dt className="text-ink-soft">Source pixels</dt>
        <dd className="font-mono">{card.sourcePx ? `${card.sourcePx.w} x ${card.sourcePx.h}` : '—'}</dd>
        <dt className="text-ink-soft">Effective DPI</dt>
        <dd className="font-mono">{card.effectiveDpi ?? '—'}</dd>
        <dt className="text-ink-soft">Turn · fill</dt>
        <dd className="font-mono">
          {card.turn ?? '—'} · {card.fill ?? '—'}
        </dd>
        <dt className="text-ink-soft">Outputs</dt>
        <dd className="break-all font-mono">{card.outputs.join(', ') || '—'}</dd>
      </dl>
    </Panel>
  );
}

const PLACEMENT_TEXT: Record<string, string> = {
  last: 'The card back is printed once, as the last page of the deck.',
  first: 'The card back is printed once, as the first page of the deck.',
  interleaved: 'Each card’s back follows it, page by page.',
  none: 'This recipe places no back page in the deck.',
};

/** Where this card's copies sit in print order, and the back printed on its reverse: where that page sits. */
function PlacePanel({ workspaceId, runId, card, cards, entries, placement }: { workspaceId: string; runId: string; card: RunCard; cards: RunCard[]; entries: DeckEntry[]; placement: string }) {
  const mine = entries.filter((e) => e.card?.id === card.id && !e.padding && e.kind === card.role);
  const first = mine[0];
  // Interleaved, each copy's back is the page after it; otherwise the common back's one page.
  const back = placement === 'interleaved' ? (first?.back ?? null) : (entries.find((e) => e.kind === 'back' && !e.padding) ?? null);
  const planned = card.back ? (cards.find((c) => c.id === card.back) ?? null) : null;
  const around = first ? entries.slice(Math.max(0, first.seq - 3), first.seq + 2) : [];
  const where = !back
    ? null
    : placement === 'interleaved'
      ? `page${mine.length > 1 ? 's' : ''} ${mine.map((e) => e.back?.seq).join(', ')} of ${entries.length}, right after ${mine.length > 1 ? 'each copy' : 'this card'}`
      : `page ${back.seq} of ${entries.length}, printed on the reverse of every card`;
  return (
    <Panel title="In the deck">
      <p className="text-sm" data-testid="card-place">
        {mine.length === 0
          ? card.role === 'back'
            ? 'This is a card back.'
            : card.copies === 0
              ? 'The manifest asks for 0 copies: this card is not in the printed deck.'
              : 'This card is not in the printed deck.'
          : `Slot${mine.length > 1 ? 's' : ''} ${mine.map((e) => e.seq).join(', ')} of ${entries.length}${mine.length > 1 ? ` (${mine.length} copies)` : ''}.`}
      </p>
      <p className="mt-1 text-xs text-ink-soft">{PLACEMENT_TEXT[placement] ?? ''}</p>
      {around.length > 0 && (
        <ol className="mt-3 flex gap-1.5" aria-label="Neighbouring slots">
          {around.map((e) => (
            <li key={e.seq} className={`w-12 text-center ${e.card?.id === card.id ? 'rounded ring-2 ring-cut' : ''}`}>
              <Thumb workspaceId={workspaceId} runId={runId} entry={e} />
              <span className="font-mono text-[10px] text-ink-soft">{e.seq}</span>
            </li>
          ))}
        </ol>
      )}
      {card.role === 'front' && back && back.kind === 'back' && mine.length > 0 ? (
        <div className="mt-4 flex items-center gap-3 rounded-md border border-line bg-white p-2" data-testid="card-back" data-back-source={back.source ?? ''}>
          <span className="w-14 shrink-0">
            <Thumb workspaceId={workspaceId} runId={runId} entry={back} />
          </span>
          <span className="text-xs">
            <span className="block font-semibold">Back: {back.source?.split('/').pop()}</span>
            <span className="text-ink-soft">{where}</span>
          </span>
        </div>
      ) : card.role === 'front' && planned ? (
        <p className="mt-4 text-xs text-ink-soft" data-testid="card-back" data-back-source={planned.source}>
          Back: <span className="font-mono">{planned.source.split('/').pop()}</span>
          {placement === 'none' ? ', not placed in the deck: it goes to the printer as its own file.' : planned.state !== 'done' ? `, not produced (${planned.state}).` : '.'}
        </p>
      ) : null}
    </Panel>
  );
}

function Thumb({ workspaceId, runId, entry }: { workspaceId: string; runId: string; entry: DeckEntry }) {
  if (!entry.card || entry.card.state !== 'done') {
    return <span className="block aspect-[5/7] w-full rounded-sm bg-paper-deep ring-1 ring-line" title={entry.kind === 'blank' ? 'blank' : (entry.source ?? '')} />;
  }
  return <img src={cardImageUrl(workspaceId, runId, entry.card.id, 'thumb')} alt={entry.kind === 'back' ? 'card back' : ''} className="block w-full rounded-sm ring-1 ring-line" loading="lazy" />;
}
