// Plain-text output of the CLI: the findings table and the run summary.
import type { SkippedEntry } from '../jobs/engine/archive.ts';
import type { RunReport } from '../jobs/engine/report.ts';
import type { CheckRow } from '../jobs/engine/run.ts';

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => r[i]!.length)));
  return rows.map((r) => r.map((cell, i) => (i === r.length - 1 ? cell : cell.padEnd(widths[i]!))).join('  ').trimEnd()).join('\n');
}

export function formatFindingsTable(rows: readonly CheckRow[], skippedFiles: readonly SkippedEntry[]): string {
  const lines: string[][] = [['CARD', 'PIXELS', 'DPI', 'SEVERITY', 'CODE', 'MESSAGE']];
  for (const row of rows) {
    const px = row.sourcePx ? `${row.sourcePx.w}x${row.sourcePx.h}` : '-';
    const dpi = row.effectiveDpi === null ? '-' : String(row.effectiveDpi);
    if (row.findings.length === 0) lines.push([row.source, px, dpi, 'ok', '-', '']);
    for (const f of row.findings) lines.push([row.source, px, dpi, f.severity, f.code, f.message]);
  }
  for (const s of skippedFiles) lines.push([s.path, '-', '-', 'skipped', '-', s.reason]);
  const errors = rows.filter((r) => r.findings.some((f) => f.severity === 'error')).length;
  const warns = rows.filter((r) => r.findings.some((f) => f.severity === 'warn')).length;
  return `${table(lines)}\n\n${rows.length} cards checked: ${errors} unusable, ${warns} with warnings, ${skippedFiles.length} other files skipped.\n`;
}

export function formatRunSummary(report: RunReport, outDir: string): string {
  const t = report.totals;
  const out: string[] = [];
  out.push(`${t.cards} cards produced, ${t.cardsSkipped} skipped; ${t.faces} card faces (${t.paddingAdded} padding), ${t.pages} PDF pages.`);
  for (const c of report.cards.filter((c) => c.state === 'skipped')) out.push(`  skipped ${c.source}: ${c.skippedBecause}`);
  const warned = report.cards.filter((c) => c.findings.some((f) => f.severity === 'warn'));
  for (const c of warned) {
    for (const f of c.findings.filter((f) => f.severity === 'warn')) out.push(`  warn ${c.source}: ${f.code} ${f.message}`);
  }
  if (report.skippedFiles.length > 0) out.push(`  ${report.skippedFiles.length} other files left out (see report.json "skippedFiles").`);
  const files = [report.outputs.pdf, report.outputs.sheets, report.outputs.proof, 'report.json', 'report.csv', report.outputs.bundle].filter(Boolean);
  out.push(`Wrote to ${outDir}: ${report.outputs.singles} single files in cards/, ${files.join(', ')}.`);
  return `${out.join('\n')}\n`;
}
