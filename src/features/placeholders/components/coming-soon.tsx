import { PageHeader, Panel } from '../../../components/ui';

const PAGES = {
  recipes: {
    title: 'Recipes',
    lines: [
      'Reusable print settings: trim (poker, bridge, tarot, mini, square, ID-1 or your own), bleed, safe margin and DPI.',
      'How the bleed is filled, how landscape art is turned, how files are named and ordered, where the back goes.',
      'Every edit makes a new version; a run keeps the version it used.',
    ],
  },
  'art-sets': {
    title: 'Art sets',
    lines: [
      'Upload a zip of card images, with an optional manifest.csv for copies and order, and back images.',
      'Each file is checked before anything is rendered: resolution, proportions, readability.',
    ],
  },
  runs: {
    title: 'Runs',
    lines: [
      'A recipe applied to an art set: singles at trim plus bleed, a combined PDF with TrimBox and BleedBox, home-print sheets with crop marks, a proof sheet and a report.',
      'Rerun after art fixes and only the changed cards are rendered again; helpers download the bundle.',
    ],
  },
} as const;

export function ComingSoon({ page }: { page: keyof typeof PAGES }) {
  const { title, lines } = PAGES[page];
  return (
    <>
      <PageHeader eyebrow="Coming next" title={title} />
      <Panel title="What this page will do" className="max-w-2xl">
        <ul className="list-inside list-disc space-y-2 text-ink-soft marker:text-cut">
          {lines.map((l) => (
            <li key={l}>{l}</li>
          ))}
        </ul>
      </Panel>
    </>
  );
}
