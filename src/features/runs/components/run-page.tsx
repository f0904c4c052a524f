import { useEffect, useRef, useState } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import { Link, useParams } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import { Button, ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { CheckField } from '../../../components/fields';
import { ProgressBar, StateBadge, severityTone } from '../../../components/status';
import { formatBytes, formatDateTime, plural } from '../../../components/format';
import { isTerminalRunState } from '../../../../shared/run-states';
import { useCancelRun } from '../api/cancel-run';
import { useFollowRun } from '../api/follow-run';
import { cardImageUrl, runFileUrl, runKey, useRun } from '../api/get-run';
import { useRunCards } from '../api/get-run-cards';
import type { RunCard, RunDetail, RunOutput, Severity } from '../api/types';
import { settledCards } from './runs-page';
import { ShareLinksPanel } from './share-links-panel';
import { useCanWrite } from './use-can-write';
import { RunViewsNav } from '../../deck/components/run-views-nav';

const OUTPUT_LABELS: Record<RunOutput['kind'], string> = {
  pdf: 'Combined PDF',
  sheets: 'Home-print sheets',
  proof: 'Proof sheet',
  'report-json': 'Report (JSON)',
  'report-csv': 'Report (CSV)',
  bundle: 'Bundle (everything, zipped)',
};

export function RunPage() {
  const { workspaceId = '', runId = '' } = useParams();
  const run = useRun(workspaceId, runId);
  const canWrite = useCanWrite(workspaceId);
  const queryClient = useQueryClient();
  const state = run.data?.state;

  // The card table stops polling when the run ends; fetch it once more so it shows the final rows.
  useEffect(() => {
    if (state && isTerminalRunState(state)) void queryClient.invalidateQueries({ queryKey: [...runKey(workspaceId, runId), 'cards'] });
  }, [state, queryClient, workspaceId, runId]);

  if (run.isPending) return <Loading what="the run" />;
  if (run.error) return <ErrorNote error={run.error} />;
  const r = run.data;
  const terminal = isTerminalRunState(r.state);

  return (
    <>
      <PageHeader eyebrow="Run" title={`${r.recipe.name} on ${r.artSet.name}`}>
        <RunViewsNav workspaceId={workspaceId} runId={r.id} />
        <Link to=".." relative="path" className="text-sm font-semibold text-cut underline-offset-4 hover:underline">
          All runs
        </Link>
      </PageHeader>
      <div className="grid items-start gap-8 xl:grid-cols-[1fr_24rem]">
        <div className="min-w-0 space-y-8">
          <ProgressPanel workspaceId={workspaceId} run={r} canWrite={canWrite} />
          {r.totals && <TotalsPanel totals={r.totals} />}
        </div>
        <DownloadsPanel workspaceId={workspaceId} run={r} />
      </div>
      <div className="mt-8 grid items-start gap-8 lg:grid-cols-2">
        <DiffPanel run={r} />
        {canWrite && <ShareLinksPanel workspaceId={workspaceId} runId={r.id} ready={r.state === 'done'} />}
      </div>
      <div className="mt-8">
        <CardsPanel workspaceId={workspaceId} runId={r.id} live={!terminal} />
      </div>
    </>
  );
}

function ProgressPanel({ workspaceId, run, canWrite }: { workspaceId: string; run: RunDetail; canWrite: boolean }) {
  const cancel = useCancelRun(workspaceId, run.id);
  const follow = useFollowRun(workspaceId, run.id);
  const terminal = isTerminalRunState(run.state);
  const p = run.progress;
  const settled = settledCards(p);
  return (
    <Panel title="Progress">
      <div className="flex flex-wrap items-center justify-between gap-4">
        <p className="flex items-center gap-3 text-sm">
          <span className="sr-only">State</span>
          <span aria-live="polite" data-testid="run-state">
            <StateBadge state={run.state} />
          </span>
          <span className="text-ink-soft">
            recipe <span className="font-mono">v{run.recipe.version}</span> · art set <span className="font-mono">r{run.artSet.revision}</span>
          </span>
        </p>
        {canWrite && !terminal && (
          <Button
            tone="danger"
            className="px-3 py-1"
            disabled={cancel.isPending}
            onClick={() => {
              if (window.confirm('Cancel this run? Cards already rendered are kept; no new ones start.')) cancel.mutate();
            }}
          >
            {cancel.isPending ? 'Canceling…' : 'Cancel run'}
          </Button>
        )}
      </div>
      <div className="mt-4">
        <ProgressBar value={settled} max={p.total} label="Run progress" tone={run.state === 'done' ? 'proof' : 'cut'} />
        <p className="mt-2 font-mono text-xs text-ink-soft" data-testid="run-progress">
          {settled} / {p.total} cards settled · {p.done} done ({p.cached} from cache) · {p.skipped} skipped · {p.failed} failed
        </p>
      </div>
      {run.error && (
        <p role="alert" className="mt-3 rounded-md border border-cut/40 bg-cut/10 px-3 py-2 text-sm text-cut-deep">
          {run.error}
        </p>
      )}
      <dl className="mt-4 grid grid-cols-3 gap-3 text-sm">
        <div>
          <dt className="text-ink-soft">Created</dt>
          <dd>{formatDateTime(run.createdAt)}</dd>
        </div>
        <div>
          <dt className="text-ink-soft">Started</dt>
          <dd>{formatDateTime(run.startedAt)}</dd>
        </div>
        <div>
          <dt className="text-ink-soft">Finished</dt>
          <dd>{formatDateTime(run.finishedAt)}</dd>
        </div>
      </dl>
      <div className="mt-4">
        <CheckField
          label="E-mail me when it ends"
          checked={run.following}
          disabled={follow.isPending || terminal}
          onChange={(e) => follow.mutate(e.target.checked)}
        />
        <ErrorNote error={follow.error ?? cancel.error} />
      </div>
    </Panel>
  );
}

function TotalsPanel({ totals }: { totals: NonNullable<RunDetail['totals']> }) {
  const codes = Object.entries(totals.findingsByCode).sort((a, b) => b[1] - a[1]);
  return (
    <Panel title="Totals">
      <dl className="grid grid-cols-3 gap-4">
        {[
          ['Cards', totals.cards],
          ['Pages', totals.pages],
          ['Padding added', totals.paddingAdded],
        ].map(([k, v]) => (
          <div key={k}>
            <dt className="text-sm text-ink-soft">{k}</dt>
            <dd className="text-2xl font-bold">{v}</dd>
          </div>
        ))}
      </dl>
      {codes.length > 0 && (
        <div className="mt-4">
          <p className="mb-2 text-sm text-ink-soft">Findings by code</p>
          <ul className="flex flex-wrap gap-2">
            {codes.map(([code, n]) => (
              <li key={code} className="rounded bg-paper-deep px-2 py-1 font-mono text-xs">
                {code} × {n}
              </li>
            ))}
          </ul>
        </div>
      )}
    </Panel>
  );
}

function DownloadsPanel({ workspaceId, run }: { workspaceId: string; run: RunDetail }) {
  const outputs = [...run.outputs].sort((a, b) => (a.kind === 'bundle' ? -1 : b.kind === 'bundle' ? 1 : 0));
  return (
    <Panel title="Downloads">
      {outputs.length === 0 ? (
        <p className="text-sm text-ink-soft">{isTerminalRunState(run.state) ? 'This run made no files.' : 'Files appear here when the run is done.'}</p>
      ) : (
        <ul className="space-y-2">
          {outputs.map((o) => (
            <li key={o.name}>
              <a
                href={runFileUrl(workspaceId, run.id, o.name)}
                download={o.name}
                className={`flex items-center justify-between gap-3 rounded-md border px-3 py-2 text-sm hover:border-cut ${o.kind === 'bundle' ? 'border-cut/50 bg-cut/5' : 'border-line bg-white'}`}
              >
                <span>
                  <span className="block font-semibold">{OUTPUT_LABELS[o.kind] ?? o.kind}</span>
                  <span className="font-mono text-xs text-ink-soft">{o.name}</span>
                </span>
                <span className="shrink-0 font-mono text-xs text-ink-soft">{formatBytes(o.bytes)}</span>
              </a>
            </li>
          ))}
        </ul>
      )}
      <p className="mt-4 border-l-2 border-cut pl-3 text-xs leading-relaxed text-ink-soft" role="note">
        Only print art you have the rights to print. When cutting home-print sheets, blades are sharp: see the instructions page in the
        sheets PDF. Local law and professional practice come first.
      </p>
    </Panel>
  );
}

function DiffPanel({ run }: { run: RunDetail }) {
  const d = run.diff;
  return (
    <Panel title="Changes since the previous run">
      {!d.previousRunId ? (
        <p className="text-sm text-ink-soft">This is the first run of this recipe on this art set.</p>
      ) : (
        <>
          <p className="mb-3 text-sm">
            Compared with{' '}
            <Link to={`../${d.previousRunId}`} relative="path" className="font-semibold text-cut underline-offset-4 hover:underline">
              the previous run
            </Link>
            : {d.added.length} added, {d.changed.length} changed, {d.removed.length} removed, {d.unchanged} unchanged.
          </p>
          {(
            [
              ['Added', d.added],
              ['Changed', d.changed],
              ['Removed', d.removed],
            ] as const
          ).map(([label, list]) =>
            list.length > 0 ? (
              <details key={label} className="mb-2" open={list.length <= 8}>
                <summary className="cursor-pointer text-sm font-medium">
                  {label} ({list.length})
                </summary>
                <ul className="mt-1 space-y-0.5 pl-4">
                  {list.map((p) => (
                    <li key={p} className="font-mono text-xs">
                      {p}
                    </li>
                  ))}
                </ul>
              </details>
            ) : null,
          )}
          <p className="text-sm text-ink-soft">Unchanged: {plural(d.unchanged, 'card')}</p>
        </>
      )}
    </Panel>
  );
}

const FILTERS: Array<{ value: Severity | null; label: string }> = [
  { value: null, label: 'All cards' },
  { value: 'error', label: 'Errors' },
  { value: 'warn', label: 'Warnings' },
  { value: 'info', label: 'Notes' },
];

function CardsPanel({ workspaceId, runId, live }: { workspaceId: string; runId: string; live: boolean }) {
  const [severity, setSeverity] = useState<Severity | null>(null);
  const cards = useRunCards(workspaceId, runId, severity, live);
  return (
    <Panel title="Cards">
      <div role="group" aria-label="Filter cards by finding severity" className="mb-4 inline-flex flex-wrap rounded-md border border-line p-0.5">
        {FILTERS.map((f) => (
          <button
            key={f.label}
            type="button"
            aria-pressed={severity === f.value}
            onClick={() => setSeverity(f.value)}
            className={`rounded px-3 py-1 text-sm font-medium ${severity === f.value ? 'bg-plum text-paper' : 'text-ink-soft hover:bg-paper-deep'}`}
          >
            {f.label}
          </button>
        ))}
      </div>
      {cards.isPending ? (
        <Loading what="cards" />
      ) : cards.error ? (
        <ErrorNote error={cards.error} />
      ) : cards.data.length === 0 ? (
        <p className="text-sm text-ink-soft">{severity ? `No cards with ${severity} findings.` : 'No cards yet: the run is being planned.'}</p>
      ) : (
        <CardsTable workspaceId={workspaceId} runId={runId} cards={cards.data} />
      )}
    </Panel>
  );
}

const COLUMNS = 8;

/**
 * The card table, windowed with TanStack Virtual: only the rows in view (and a few around them) are in
 * the page, between two spacer rows that keep the scroll height, so a 1,000-card run scrolls smoothly.
 * It stays a real table (aria-rowcount / aria-rowindex tell assistive tools where a row sits), and the
 * scroll box takes focus so the arrow and page keys move through it.
 */
function CardsTable({ workspaceId, runId, cards }: { workspaceId: string; runId: string; cards: RunCard[] }) {
  const scroller = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({
    count: cards.length,
    getScrollElement: () => scroller.current,
    estimateSize: () => 84,
    overscan: 8,
    getItemKey: (i) => cards[i]!.id,
  });
  const rows = virtualizer.getVirtualItems();
  const before = rows.length ? rows[0]!.start : 0;
  const after = rows.length ? virtualizer.getTotalSize() - rows.at(-1)!.end : 0;
  const th = 'sticky top-0 z-10 bg-white pb-2 pt-1 font-medium shadow-[0_1px_0_var(--color-line)]';
  return (
    <div
      ref={scroller}
      className="max-h-[70vh] overflow-auto rounded-md focus-visible:outline-2 focus-visible:outline-cut"
      tabIndex={0}
      role="region"
      aria-label={`Cards: ${plural(cards.length, 'row')}, scroll for more`}
      data-testid="cards-scroller"
    >
      <table className="w-full text-left text-sm" data-testid="cards-table" aria-rowcount={cards.length + 1}>
        <thead className="text-ink-soft">
          <tr aria-rowindex={1}>
            <th className={th}>
              <span className="sr-only">Thumbnail</span>
            </th>
            <th className={th}>#</th>
            <th className={th}>Source</th>
            <th className={th}>State</th>
            <th className={th}>Outputs</th>
            <th className={th}>Eff. DPI</th>
            <th className={th}>Turn / fill</th>
            <th className={th}>Findings</th>
          </tr>
        </thead>
        <tbody>
          {before > 0 && (
            <tr aria-hidden="true" style={{ height: before }}>
              <td colSpan={COLUMNS} />
            </tr>
          )}
          {rows.map((row) => (
            <CardRow key={row.key} index={row.index} measure={virtualizer.measureElement} workspaceId={workspaceId} runId={runId} card={cards[row.index]!} />
          ))}
          {after > 0 && (
            <tr aria-hidden="true" style={{ height: after }}>
              <td colSpan={COLUMNS} />
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}

function CardRow({ workspaceId, runId, card: c, index, measure }: { workspaceId: string; runId: string; card: RunCard; index: number; measure: (el: HTMLTableRowElement | null) => void }) {
  const inspect = `/w/${workspaceId}/runs/${runId}/cards/${c.id}`;
  return (
    <tr ref={measure} data-index={index} aria-rowindex={index + 2} data-testid="card-row" className="border-t border-line/70 align-top">
      <td className="py-2 pr-3">
        {c.state === 'done' ? (
          <Link to={inspect} tabIndex={-1} aria-hidden="true">
            <img src={cardImageUrl(workspaceId, runId, c.id, 'thumb')} alt="" loading="lazy" decoding="async" className="h-16 w-auto max-w-16 rounded-sm shadow-sm ring-1 ring-line" />
          </Link>
        ) : (
          <span className="inline-block h-16 w-11 rounded-sm bg-paper-deep" aria-hidden />
        )}
      </td>
      <td className="py-2 pr-3 font-mono text-xs">{c.seq}</td>
      <td className="py-2 pr-3">
        <Link to={inspect} className="font-mono text-xs text-ink underline-offset-4 hover:text-cut hover:underline" aria-label={`Inspect card ${c.seq}: ${c.source}`}>
          {c.source}
        </Link>
        {c.role === 'back' && <span className="ml-1 rounded bg-plum px-1 font-mono text-[10px] text-paper">back</span>}
        {c.copies !== null && c.copies !== 1 && (
          <span className="ml-1 rounded bg-ink/80 px-1 font-mono text-[10px] text-paper" title={c.copies === 0 ? 'The manifest leaves this card out of the deck' : undefined}>
            ×{c.copies}
          </span>
        )}
        {c.sourcePx && <p className="font-mono text-[11px] text-ink-soft">{c.sourcePx.w} x {c.sourcePx.h} px</p>}
      </td>
      <td className="py-2 pr-3">
        <StateBadge state={c.state} />
        {c.cached && <p className="mt-1 text-[11px] text-ink-soft">from cache</p>}
      </td>
      <td className="py-2 pr-3 font-mono text-xs">
        {c.outputs.length === 0 ? '—' : c.outputs.map((o) => <div key={o}>{o}</div>)}
      </td>
      <td className="py-2 pr-3 font-mono text-xs">{c.effectiveDpi ?? '—'}</td>
      <td className="py-2 pr-3 text-xs">
        {c.turn ?? '—'}
        <br />
        <span className="text-ink-soft">{c.fill ?? '—'}</span>
      </td>
      <td className="py-2">
        <ul className="space-y-1">
          {c.findings.map((f, i) => (
            <li key={i} className={`rounded px-1.5 py-1 text-xs ${severityTone[f.severity]}`}>
              <span className="font-mono font-semibold">{f.code}</span> {f.message}
            </li>
          ))}
        </ul>
        {c.findings.length === 0 && <span className="text-xs text-ink-soft">none</span>}
      </td>
    </tr>
  );
}
