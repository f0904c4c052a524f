// The first-run guide: from nothing to a downloaded PDF in five steps. Steps already done are folded
// away (hidden); what counts as done comes from the workspace's own recipes, art sets and runs, and from
// what the server recorded for this member (a card opened at full size, a combined PDF downloaded), so
// the guide is the same in every browser the member signs in from.
import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { useQueryClient } from '@tanstack/react-query';
import { runFileUrl } from '../../runs/api/get-run';
import type { RunSummary } from '../../runs/api/types';
import type { GuideProgress } from '../../../../shared/api/runs';
import { guideKey } from '../api/get-guide';

type Step = { id: string; title: string; text: string; done: boolean; action: ReactNode };

export function FirstRunGuide({
  workspaceId,
  recipes,
  artSets,
  runs,
  latestDone,
  pdfName,
  firstCardId,
  progress,
}: {
  workspaceId: string;
  recipes: number;
  artSets: number;
  runs: number;
  latestDone: RunSummary | null;
  pdfName: string | null;
  firstCardId: string | null;
  progress: GuideProgress;
}) {
  const queryClient = useQueryClient();
  // The download is the browser's own request; ask again once the server has had time to record it.
  const downloaded = () => setTimeout(() => void queryClient.invalidateQueries({ queryKey: guideKey(workspaceId) }), 1500);
  const linkClass = 'inline-flex rounded-md bg-cut px-3 py-1.5 text-sm font-semibold text-white hover:bg-cut-deep';
  const steps: Step[] = [
    {
      id: 'recipe',
      title: 'Make a recipe',
      text: 'Choose the card size, bleed and DPI; the preview draws the card as it will be cut.',
      done: recipes > 0,
      action: (
        <Link to="recipes/new" className={linkClass}>
          New recipe
        </Link>
      ),
    },
    {
      id: 'art',
      title: 'Upload art',
      text: 'A zip of card images, with a manifest.csv and a back image if you have them.',
      done: artSets > 0,
      action: (
        <Link to="art-sets" className={linkClass}>
          Upload an art set
        </Link>
      ),
    },
    {
      id: 'run',
      title: 'Run it',
      text: 'Apply the recipe to the art set: every card is conformed and checked.',
      done: runs > 0,
      action: (
        <Link to="runs" className={linkClass}>
          Start a run
        </Link>
      ),
    },
    {
      id: 'proof',
      title: 'Check the proof',
      text: 'Step through every card with its trim, bleed and safe lines, and read its findings.',
      done: progress.proofChecked,
      action:
        latestDone && firstCardId ? (
          <Link to={`runs/${latestDone.id}/cards/${firstCardId}`} className={linkClass}>
            Open the proof viewer
          </Link>
        ) : (
          <span className="text-xs text-ink-soft">Available when a run is done.</span>
        ),
    },
    {
      id: 'pdf',
      title: 'Download the PDF',
      text: 'The combined PDF the printer reads, one card per page with its TrimBox.',
      done: progress.pdfDownloaded,
      action:
        latestDone && pdfName ? (
          <a href={runFileUrl(workspaceId, latestDone.id, pdfName)} download={pdfName} onClick={downloaded} className={linkClass}>
            Download {pdfName}
          </a>
        ) : (
          <span className="text-xs text-ink-soft">Available when a run with a PDF is done.</span>
        ),
    },
  ];
  const open = steps.filter((s) => !s.done);
  if (open.length === 0) return null;
  const next = open[0]!;
  return (
    <section aria-labelledby="guide-title" className="crop-marks mb-10 rounded-sm p-6" data-testid="first-run-guide">
      <h2 id="guide-title" className="font-mono text-xs font-medium uppercase tracking-[0.2em] text-ink-soft">
        From art to a print-ready PDF · {steps.length - open.length} of {steps.length} done
      </h2>
      <ol className="mt-4 grid gap-4 sm:grid-cols-2 lg:grid-cols-3">
        {steps.map((s, i) =>
          s.done ? null : (
            <li key={s.id} data-step={s.id} className={`rounded-md border p-4 ${s === next ? 'border-cut bg-white' : 'border-line'}`}>
              <p className="font-mono text-xs text-cut">0{i + 1}{s === next ? ' · next' : ''}</p>
              <h3 className="mt-1 font-semibold">{s.title}</h3>
              <p className="mt-1 text-sm text-ink-soft">{s.text}</p>
              <div className="mt-3">{s.action}</div>
            </li>
          ),
        )}
      </ol>
    </section>
  );
}
