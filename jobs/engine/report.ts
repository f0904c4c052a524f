// report.json and report.csv (DESIGN.md "Outputs: report"): per card and run totals.
// No timestamps inside, so a rerun with the same inputs writes the same bytes.
import { rename, writeFile } from 'node:fs/promises';
import type { Finding } from '../../shared/findings.ts';
import type { RecipeGeometry, Recipe } from '../../shared/recipe.ts';
import type { SkippedEntry } from './archive.ts';

export type ReportCard = {
  source: string;
  /** front: a card face; back: a card back (recipe back.art or a manifest back). */
  role: 'front' | 'back';
  title: string | null;
  state: 'done' | 'skipped';
  /** Why the card was skipped (its error findings, in words), or null. */
  skippedBecause: string | null;
  /** Single files written for this card, in deck order. */
  outputs: string[];
  copies: number;
  sourcePx: { w: number; h: number } | null;
  format: string | null;
  effectiveDpi: number | null;
  turn: 'clockwise' | 'counterclockwise' | 'none' | null;
  fill: 'solid' | 'edge' | 'mirror' | null;
  sourceKind: 'trim' | 'bleed' | null;
  sha256: string | null;
  findings: Finding[];
};

export type RunReport = {
  recipe: Recipe;
  source: string;
  geometry: Pick<RecipeGeometry, 'pagePx' | 'trimPx' | 'dpi' | 'pagePt' | 'trimBoxPt' | 'bleedPt'>;
  cards: ReportCard[];
  /** Files in the art set that are not cards (OS junk, other files) and why they were left out. */
  skippedFiles: SkippedEntry[];
  outputs: { singles: number; pdf: string | null; sheets: string | null; proof: string | null; bundle: string | null };
  totals: {
    /** Card fronts produced (distinct source images). */
    cards: number;
    /** Card images that could not be used. */
    cardsSkipped: number;
    /** Card faces in the deck: every copy of every front, plus padding. */
    faces: number;
    /** Pages of the combined PDF (one per deck slot, backs included). */
    pages: number;
    paddingAdded: number;
    /** Home-print front sheets written (each with its back sheet when there are backs), 0 when none. */
    sheets: number;
    findingsByCode: Record<string, number>;
  };
};

export function countFindings(cards: readonly ReportCard[]): Record<string, number> {
  const counts: Record<string, number> = {};
  for (const card of cards) for (const f of card.findings) counts[f.code] = (counts[f.code] ?? 0) + 1;
  return Object.fromEntries(Object.entries(counts).sort(([a], [b]) => (a < b ? -1 : 1)));
}

function csvCell(value: unknown): string {
  const text = value === null || value === undefined ? '' : String(value);
  // Leading = + - @ would be read as a formula by spreadsheet programs; prefix a quote to keep it text.
  const safe = /^[=+\-@]/.test(text) ? `'${text}` : text;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export const REPORT_CSV_COLUMNS = [
  'source', 'role', 'title', 'state', 'outputs', 'copies', 'source_width', 'source_height', 'format',
  'effective_dpi', 'turn', 'fill', 'source_kind', 'finding_codes', 'findings',
] as const;

export function reportCsv(report: RunReport): string {
  const rows: unknown[][] = [[...REPORT_CSV_COLUMNS]];
  for (const c of report.cards) {
    rows.push([
      c.source, c.role, c.title, c.state, c.outputs.join(';'), c.copies, c.sourcePx?.w, c.sourcePx?.h, c.format,
      c.effectiveDpi, c.turn, c.fill, c.sourceKind, c.findings.map((f) => f.code).join(';'),
      c.findings.map((f) => `${f.severity}: ${f.message}`).join(' | '),
    ]);
  }
  for (const s of report.skippedFiles) {
    rows.push([s.path, 'file', null, 'skipped', null, 0, null, null, null, null, null, null, null, null, s.reason]);
  }
  return `${rows.map((r) => r.map(csvCell).join(',')).join('\r\n')}\r\n`;
}

/** Writes report.json and report.csv (temp name, then rename). */
export async function writeReports(report: RunReport, jsonPath: string, csvPath: string): Promise<void> {
  await writeFile(`${jsonPath}.tmp`, `${JSON.stringify(report, null, 2)}\n`);
  await rename(`${jsonPath}.tmp`, jsonPath);
  await writeFile(`${csvPath}.tmp`, reportCsv(report));
  await rename(`${csvPath}.tmp`, csvPath);
}
