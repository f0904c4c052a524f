// Links from a run to the views of issue 5: the proof viewer (first card), the deck by press sheets
// and the print planner. Shown in the run page's header.
import { Link } from 'react-router-dom';
import { useRunCards } from '../../runs/api/get-run-cards';

const linkClass = 'rounded-md border border-line bg-white px-3 py-1.5 text-sm font-semibold text-ink hover:border-cut hover:text-cut';

export function RunViewsNav({ workspaceId, runId }: { workspaceId: string; runId: string }) {
  const cards = useRunCards(workspaceId, runId, null, false);
  const first = cards.data ? [...cards.data].sort((a, b) => a.seq - b.seq)[0] : undefined;
  const base = `/w/${workspaceId}/runs/${runId}`;
  return (
    <nav aria-label="Look at this run" className="flex flex-wrap gap-2">
      {first && (
        <Link to={`${base}/cards/${first.id}`} className={linkClass}>
          Inspect cards
        </Link>
      )}
      <Link to={`${base}/deck`} className={linkClass}>
        Deck by sheets
      </Link>
      <Link to={`${base}/plan`} className={linkClass}>
        Plan the print
      </Link>
    </nav>
  );
}
