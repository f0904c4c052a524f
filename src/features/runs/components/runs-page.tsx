import { Link, useParams } from 'react-router-dom';
import { ErrorNote, Loading, PageHeader, Panel } from '../../../components/ui';
import { FindingCounts, ProgressBar, StateBadge } from '../../../components/status';
import { formatDateTime } from '../../../components/format';
import { useWorkspace } from '../../workspaces/api/get-workspace';
import { useRuns } from '../api/get-runs';
import type { RunSummary } from '../api/types';

export const settledCards = (p: RunSummary['progress']) => p.done + p.skipped + p.failed;

export function RunsPage() {
  const { workspaceId = '' } = useParams();
  const workspace = useWorkspace(workspaceId);
  const runs = useRuns(workspaceId);
  return (
    <>
      <PageHeader eyebrow={workspace.data?.name} title="Runs" />
      <p className="mb-6 max-w-2xl text-ink-soft">
        A run is one recipe version applied to one art set revision. Start one from an{' '}
        <Link to="../art-sets" relative="path" className="font-semibold text-cut underline-offset-4 hover:underline">
          art set
        </Link>
        .
      </p>
      <Panel>
        {runs.isPending ? (
          <Loading what="runs" />
        ) : runs.error ? (
          <ErrorNote error={runs.error} />
        ) : runs.data.length === 0 ? (
          <p className="text-sm text-ink-soft">No runs yet.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm">
              <thead className="text-ink-soft">
                <tr>
                  <th className="pb-2 font-medium">Run</th>
                  <th className="pb-2 font-medium">State</th>
                  <th className="w-40 pb-2 font-medium">Progress</th>
                  <th className="pb-2 font-medium">Findings</th>
                  <th className="pb-2 font-medium">Started</th>
                  <th className="pb-2 font-medium">Finished</th>
                </tr>
              </thead>
              <tbody>
                {runs.data.map((r) => (
                  <tr key={r.id} className="border-t border-line/70">
                    <td className="py-3 pr-3">
                      <Link to={r.id} className="font-semibold underline-offset-4 hover:text-cut hover:underline">
                        {r.recipe.name} <span className="font-mono text-xs font-normal">v{r.recipe.version}</span>
                      </Link>
                      <p className="text-xs text-ink-soft">
                        on {r.artSet.name} <span className="font-mono">r{r.artSet.revision}</span>
                      </p>
                    </td>
                    <td className="py-3">
                      <StateBadge state={r.state} />
                    </td>
                    <td className="py-3 pr-3">
                      <ProgressBar value={settledCards(r.progress)} max={r.progress.total} label={`Progress of run ${r.recipe.name}`} tone={r.state === 'done' ? 'proof' : 'cut'} />
                      <p className="mt-1 font-mono text-xs text-ink-soft">
                        {settledCards(r.progress)} / {r.progress.total}
                      </p>
                    </td>
                    <td className="py-3">
                      <FindingCounts findings={r.findings} />
                    </td>
                    <td className="py-3 text-ink-soft">{formatDateTime(r.startedAt ?? r.createdAt)}</td>
                    <td className="py-3 text-ink-soft">{formatDateTime(r.finishedAt)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Panel>
    </>
  );
}
