// The workspace home: a first-run guide until the first PDF is downloaded, recent runs with their
// state, progress and findings, the art sets and the recipes, and the planning tools.
import { Link, useParams } from 'react-router-dom';
import { Loading, PageHeader, Panel, RoleBadge } from '../../../components/ui';
import { FindingCounts, ProgressBar, StateBadge } from '../../../components/status';
import { formatDateTime, plural } from '../../../components/format';
import { useWorkspace } from '../../workspaces/api/get-workspace';
import { useRecipes } from '../../recipes/api/get-recipes';
import { useArtSets } from '../../art-sets/api/get-art-sets';
import { useRuns } from '../../runs/api/get-runs';
import { useQuery } from '@tanstack/react-query';
import { runQueryOptions } from '../../runs/api/get-run';
import { runCardsQueryOptions } from '../../runs/api/get-run-cards';
import { FirstRunGuide } from './first-run-guide';
import { useGuide } from '../api/get-guide';

const roleText = {
  owner: 'You manage members and settings, and can do everything makers do.',
  maker: 'You define recipes, upload art sets and start runs.',
  helper: 'You can see runs and download finished bundles.',
};

const linkClass = 'text-sm font-semibold text-cut underline-offset-4 hover:underline';

export function HomePage() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  const recipes = useRecipes(workspaceId);
  const artSets = useArtSets(workspaceId);
  const runs = useRuns(workspaceId);
  const guide = useGuide(workspaceId);
  const latestDone = runs.data?.find((r) => r.state === 'done') ?? null;
  const latest = useQuery({ ...runQueryOptions(workspaceId, latestDone?.id ?? ''), enabled: latestDone !== null });
  const latestCards = useQuery({ ...runCardsQueryOptions(workspaceId, latestDone?.id ?? '', null, false), enabled: latestDone !== null });
  if (!workspace.data) return <Loading what="workspace" />;
  const ws = workspace.data;
  const canWrite = ws.role !== 'helper';
  const pdfName = latestDone ? (latest.data?.outputs.find((o) => o.kind === 'pdf')?.name ?? null) : null;
  const firstCardId = latestDone ? ([...(latestCards.data ?? [])].sort((a, b) => a.seq - b.seq)[0]?.id ?? null) : null;
  const loaded = recipes.data && artSets.data && runs.data && guide.data;

  return (
    <>
      <PageHeader eyebrow="Workspace" title={ws.name}>
        <p className="flex items-center gap-2 text-sm text-ink-soft">
          Your role <RoleBadge role={ws.role} />
        </p>
      </PageHeader>
      <p className="mb-8 max-w-2xl text-ink-soft">{roleText[ws.role]}</p>

      {canWrite && loaded && (
        <FirstRunGuide
          workspaceId={workspaceId}
          recipes={recipes.data.length}
          artSets={artSets.data.length}
          runs={runs.data.length}
          latestDone={latestDone}
          pdfName={pdfName}
          firstCardId={firstCardId}
          progress={guide.data}
        />
      )}

      <div className="grid items-start gap-8 xl:grid-cols-[2fr_1fr]">
        <Panel title="Recent runs">
          {runs.isPending ? (
            <Loading what="runs" />
          ) : !runs.data?.length ? (
            <p className="text-sm text-ink-soft">No runs yet.</p>
          ) : (
            <ul className="divide-y divide-line/70" data-testid="home-runs">
              {runs.data.slice(0, 8).map((r) => {
                const settled = r.progress.done + r.progress.skipped + r.progress.failed;
                return (
                  <li key={r.id} className="grid gap-2 py-3 sm:grid-cols-[1fr_10rem_auto] sm:items-center">
                    <div className="min-w-0">
                      <Link to={`runs/${r.id}`} className="font-semibold text-ink underline-offset-4 hover:text-cut hover:underline">
                        {r.recipe.name} on {r.artSet.name}
                      </Link>
                      <p className="text-xs text-ink-soft">
                        <StateBadge state={r.state} /> <span className="ml-1">{formatDateTime(r.createdAt)}</span>
                      </p>
                    </div>
                    <div>
                      <ProgressBar value={settled} max={r.progress.total} label={`Progress of ${r.recipe.name} on ${r.artSet.name}`} tone={r.state === 'done' ? 'proof' : 'cut'} />
                      <p className="mt-1 font-mono text-[11px] text-ink-soft">
                        {settled} / {r.progress.total} cards
                      </p>
                    </div>
                    <div className="flex flex-col items-start gap-1 sm:items-end">
                      <FindingCounts findings={r.findings} />
                      {r.state === 'done' && (
                        <span className="flex gap-3 text-xs">
                          <Link to={`runs/${r.id}/deck`} className={linkClass}>
                            Deck
                          </Link>
                          <Link to={`runs/${r.id}/plan`} className={linkClass}>
                            Plan
                          </Link>
                        </span>
                      )}
                    </div>
                  </li>
                );
              })}
            </ul>
          )}
          <Link to="runs" className={`mt-3 inline-block ${linkClass}`}>
            All runs
          </Link>
        </Panel>
        <div className="space-y-8">
          <Panel title="Art sets">
            {artSets.isPending ? (
              <Loading what="art sets" />
            ) : !artSets.data?.length ? (
              <p className="text-sm text-ink-soft">No art sets yet.</p>
            ) : (
              <ul className="space-y-1.5 text-sm" data-testid="home-art-sets">
                {artSets.data.slice(0, 6).map((a) => (
                  <li key={a.id} className="flex justify-between gap-2">
                    <Link to={`art-sets/${a.id}`} className="truncate font-medium underline-offset-4 hover:text-cut hover:underline">
                      {a.name}
                    </Link>
                    <span className="shrink-0 font-mono text-xs text-ink-soft">
                      {plural(a.cardCount, 'card')} · r{a.revision}
                    </span>
                  </li>
                ))}
              </ul>
            )}
          </Panel>
          <Panel title="Recipes">
            {recipes.isPending ? (
              <Loading what="recipes" />
            ) : !recipes.data?.length ? (
              <p className="text-sm text-ink-soft">No recipes yet.</p>
            ) : (
              <ul className="space-y-1.5 text-sm" data-testid="home-recipes">
                {recipes.data.slice(0, 6).map((r) => (
                  <li key={r.id} className="flex justify-between gap-2">
                    <Link to={`recipes/${r.id}`} className="truncate font-medium underline-offset-4 hover:text-cut hover:underline">
                      {r.name}
                    </Link>
                    <span className="shrink-0 font-mono text-xs text-ink-soft">v{r.version}</span>
                  </li>
                ))}
              </ul>
            )}
          </Panel>
          <Panel title="Tools">
            <ul className="space-y-2 text-sm">
              <li>
                <Link to="preview" className={linkClass}>
                  Card preview
                </Link>
                <span className="block text-xs text-ink-soft">Try a size, bleed and safe margin, drawn to scale.</span>
              </li>
              <li>
                <Link to="plan" className={linkClass}>
                  Print planner
                </Link>
                <span className="block text-xs text-ink-soft">Sheets, padding, blank slots and the price of an order.</span>
              </li>
              <li>
                <Link to="price-sheets" className={linkClass}>
                  Price sheets
                </Link>
                <span className="block text-xs text-ink-soft">Your printer’s deck sizes, setup fee and stocks.</span>
              </li>
            </ul>
          </Panel>
        </div>
      </div>
    </>
  );
}
