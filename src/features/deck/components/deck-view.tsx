// The whole deck in print order as thumbnails, one outlined block per press sheet of the sheet
// multiple. Only the sheets in view are drawn (a small windowing of our own), so a 1,000-card run
// scrolls as smoothly as a 20-card one.
import { useEffect, useMemo, useRef, useState } from 'react';
import { Link } from 'react-router-dom';
import { cardImageUrl } from '../../runs/api/get-run';
import type { DeckEntry } from '../api/use-run-deck';

const CELL_W = 92;
const CELL_H = 150;
const GAP = 10;
const SHEET_HEAD = 34;
const SHEET_PAD = 14;
const SHEET_GAP = 18;
const OVERSCAN_PX = 600;

type Sheet = { index: number; start: number; entries: DeckEntry[]; top: number; height: number };

export function layoutSheets(entries: readonly DeckEntry[], multiple: number, columns: number): Sheet[] {
  const per = Math.max(1, multiple);
  const sheets: Sheet[] = [];
  let top = 0;
  for (let start = 0; start < entries.length; start += per) {
    const slice = entries.slice(start, start + per);
    const rows = Math.ceil(slice.length / columns);
    // Head, its border, padding above and below, the rows, the section's own border.
    const height = SHEET_HEAD + 1 + SHEET_PAD * 2 + rows * CELL_H + (rows - 1) * GAP + 4;
    sheets.push({ index: sheets.length, start, entries: slice, top, height });
    top += height + SHEET_GAP;
  }
  return sheets;
}

/** First sheet whose bottom is below `y` (binary search over the sheets' tops). */
function firstSheetBelow(sheets: readonly Sheet[], y: number): number {
  let lo = 0;
  let hi = sheets.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sheets[mid]!.top + sheets[mid]!.height < y) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export function DeckView({ workspaceId, runId, entries, multiple, height = 640 }: { workspaceId: string; runId: string; entries: readonly DeckEntry[]; multiple: number; height?: number }) {
  const scroller = useRef<HTMLDivElement>(null);
  const [width, setWidth] = useState(900);
  const [scrollTop, setScrollTop] = useState(0);

  useEffect(() => {
    const el = scroller.current;
    if (!el) return;
    const observer = new ResizeObserver(([entry]) => setWidth(entry!.contentRect.width));
    observer.observe(el);
    return () => observer.disconnect();
  }, []);

  const columns = Math.max(1, Math.min(Math.max(1, multiple), Math.floor((width - SHEET_PAD * 2 + GAP) / (CELL_W + GAP))));
  const sheets = useMemo(() => layoutSheets(entries, multiple, columns), [entries, multiple, columns]);
  const total = sheets.length ? sheets.at(-1)!.top + sheets.at(-1)!.height + 16 : 0;
  const from = sheets.length ? firstSheetBelow(sheets, scrollTop - OVERSCAN_PX) : 0;
  const visible: Sheet[] = [];
  for (let i = from; i < sheets.length && sheets[i]!.top < scrollTop + height + OVERSCAN_PX; i++) visible.push(sheets[i]!);

  return (
    <div
      ref={scroller}
      onScroll={(e) => setScrollTop(e.currentTarget.scrollTop)}
      className="relative overflow-y-auto rounded-md border border-line bg-paper-deep/40"
      style={{ height: Math.min(height, total + 2) || 120 }}
      data-testid="deck-view"
      data-sheets={sheets.length}
      role="region"
      aria-label={`Deck in print order: ${entries.length} slots on ${sheets.length} press sheets`}
      tabIndex={0}
    >
      <div style={{ height: total, position: 'relative' }}>
        {visible.map((sheet) => (
          <section
            key={sheet.index}
            data-testid="press-sheet"
            aria-label={`Press sheet ${sheet.index + 1}: slots ${sheet.start + 1} to ${sheet.start + sheet.entries.length}`}
            className="absolute inset-x-2 rounded-sm border-2 border-dashed border-plum/50 bg-white/70"
            style={{ top: sheet.top + 8, height: sheet.height }}
          >
            <h3 className="flex h-[34px] items-center justify-between border-b border-line/70 px-3 font-mono text-xs text-ink-soft">
              <span className="font-semibold text-plum">Press sheet {sheet.index + 1}</span>
              <span>
                slots {sheet.start + 1}–{sheet.start + sheet.entries.length}
                {sheet.entries.length < multiple ? ` · ${multiple - sheet.entries.length} short of ${multiple}` : ''}
              </span>
            </h3>
            <ol className="grid justify-start" style={{ gridTemplateColumns: `repeat(${columns}, ${CELL_W}px)`, gap: GAP, padding: SHEET_PAD }}>
              {sheet.entries.map((e) => (
                <li key={e.seq}>
                  <Slot workspaceId={workspaceId} runId={runId} entry={e} />
                </li>
              ))}
            </ol>
          </section>
        ))}
      </div>
    </div>
  );
}

function Slot({ workspaceId, runId, entry: e }: { workspaceId: string; runId: string; entry: DeckEntry }) {
  const name = e.source ? (e.source.split('/').pop() ?? e.source) : 'blank';
  const copyText = e.kind === 'front' && e.copies > 1 ? `copy ${e.copy} of ${e.copies}` : null;
  const backName = e.back ? (e.back.kind === 'back' && e.back.source ? (e.back.source.split('/').pop() ?? e.back.source) : 'blank') : null;
  const label = `Slot ${e.seq}: ${e.kind === 'blank' ? 'blank card' : e.kind === 'back' ? `back ${name}` : name}${copyText ? `, ${copyText}` : ''}${e.padding ? ', padding' : ''}${backName ? `, back ${backName}` : ''}`;
  const body = (
    <>
      <span className={`relative flex h-[118px] w-full items-center justify-center overflow-hidden rounded-sm ${e.padding ? 'ring-2 ring-amber-400' : 'ring-1 ring-line'} ${e.kind === 'blank' ? 'bg-white' : 'bg-paper-deep'}`}>
        {e.card && e.card.state === 'done' ? (
          <img src={cardImageUrl(workspaceId, runId, e.card.id, 'thumb')} alt="" loading="lazy" decoding="async" className="h-full w-full object-contain" />
        ) : (
          <span className="px-1 text-center font-mono text-[10px] text-ink-soft">{e.kind === 'blank' ? 'blank' : 'no image'}</span>
        )}
        {e.padding && <span className="absolute inset-x-0 bottom-0 bg-amber-300/90 py-0.5 text-center font-mono text-[10px] font-semibold text-amber-950">padding</span>}
        {e.kind === 'back' && !e.padding && <span className="absolute inset-x-0 bottom-0 bg-plum/90 py-0.5 text-center font-mono text-[10px] text-paper">back</span>}
        {copyText && <span className="absolute right-0.5 top-0.5 rounded bg-ink/80 px-1 font-mono text-[10px] text-paper">×{e.copies}</span>}
        {e.back && (
          <span
            className="absolute left-0.5 top-0.5 block h-9 w-[26px] overflow-hidden rounded-sm bg-white shadow ring-1 ring-plum"
            data-testid="slot-back"
            data-back-source={e.back.source ?? ''}
            title={`Back: ${backName}`}
          >
            {e.back.card && e.back.card.state === 'done' && (
              <img src={cardImageUrl(workspaceId, runId, e.back.card.id, 'thumb')} alt="" loading="lazy" decoding="async" className="h-full w-full object-cover" />
            )}
          </span>
        )}
      </span>
      <span className="mt-1 block truncate font-mono text-[10px] text-ink-soft">
        {e.seq}. {name}
      </span>
      {copyText && <span className="block font-mono text-[10px] text-ink-soft">{copyText}</span>}
    </>
  );
  const common = { 'data-testid': 'deck-slot', 'data-kind': e.kind, 'data-padding': String(e.padding), title: label } as const;
  return e.card ? (
    <Link to={`../cards/${e.card.id}`} relative="path" aria-label={label} className="block rounded-sm" {...common}>
      {body}
    </Link>
  ) : (
    <div role="img" aria-label={label} {...common}>
      {body}
    </div>
  );
}
