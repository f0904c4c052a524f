// run-assemble {runId}: once every card is settled, builds the deck from the card rows and has the
// engine write PDF, sheets, proof and report into a temp folder; the files are then renamed into
// ws/<id>/runs/<runId>/. The bundle is kept as the layout of a composed zip of those files and the
// renders (server/composed-zip.ts), not as a second copy of them. Safe to run twice: the same rows
// give the same bytes, and only the call that moves the run to `done` sends the mail.
import { randomBytes } from 'node:crypto';
import { mkdir, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import type { OutputKind, RunOutput, RunTotals } from '../../shared/api/runs.ts';
import { slugify } from '../../shared/naming.ts';
import { assembleOutputs, BUNDLE_MTIME, mapLimited, type RenderedCard } from '../engine/run.ts';
import { countCards, listCards, setCardsFindings } from '../../server/db/run-cards.ts';
import { transitionRun } from '../../server/db/runs.ts';
import { storageKeys } from '../../server/storage.ts';
import { composedZipLayout, layoutKeyOf } from '../../server/composed-zip.ts';
import { finishRunFailed, mailRunEnded } from './finish.ts';
import { loadRun, openRunArtSet } from './load.ts';
import type { RunsRuntime } from './runtime.ts';

// Render files fetched from storage at once (S3 downloads; local storage only checks they exist).
const FETCHES_AT_ONCE = 8;

export async function assembleRun(rt: RunsRuntime, runId: string): Promise<void> {
  const loaded = await loadRun(rt, runId);
  if (!loaded || loaded.run.state !== 'running') return;
  const { run, recipe } = loaded;
  if ((await countCards(rt.db, runId)).open > 0) return; // the last render asks again

  // Assembled in this worker's own folder; the finished files go to storage.
  const workDir = path.join(rt.config.workDir, 'tmp', `assemble-${run.id}-${randomBytes(6).toString('hex')}`);
  try {
    const cards = await listCards(rt.db, runId);
    const set = await openRunArtSet(rt, loaded);
    const artSet = await rt.db('art_sets').where({ id: loaded.artSetId }).first('name');
    const settled = cards.filter((c) => c.state === 'done' || c.state === 'skipped' || c.state === 'failed');
    // Local storage hands out the stored render itself (the engine links singles to it); S3 downloads.
    // Each render's local file and its storage key: the composed bundle names the key.
    const renderKeyOf = new Map<string, string>();
    const rendered: RenderedCard[] = await mapLimited(settled, FETCHES_AT_ONCE, async (c) => {
      const info = (c.info ?? { sourcePx: null, format: null, findings: c.findings }) as RenderedCard['info'] & { renderKey?: string | null; renderCrc32?: number | null };
      const pngPath = c.state === 'done' && info.renderKey ? await rt.storage.fetchFile(info.renderKey, rt.config.workDir) : null;
      if (pngPath) renderKeyOf.set(pngPath, info.renderKey!);
      return {
        source: c.source,
        role: c.role,
        title: c.title,
        pngPath,
        // Absent on renders cached before it was kept: the bundle then hashes the file.
        pngCrc32: typeof info.renderCrc32 === 'number' ? info.renderCrc32 : null,
        // Copies, so marking duplicates adds findings to this assembly only.
        info: { ...info, findings: [...(info.findings ?? c.findings)] },
      };
    });
    await mkdir(workDir, { recursive: true });
    const { report, bundleParts } = await assembleOutputs({
      recipe,
      outDir: workDir,
      source: `${slugify(artSet?.name ?? 'art-set')}.zip`,
      cards: rendered,
      manifest: set.manifest,
      skippedFiles: set.skipped,
      bundle: 'parts',
    });

    const keyOf = (name: string) => storageKeys.runFile(run.workspace_id, run.id, name);
    const files: Array<{ name: string | null; kind: OutputKind }> = [
      { name: report.outputs.pdf, kind: 'pdf' },
      { name: report.outputs.sheets, kind: 'sheets' },
      { name: report.outputs.proof, kind: 'proof' },
      { name: 'report.json', kind: 'report-json' },
      { name: 'report.csv', kind: 'report-csv' },
      // Written as a file only when the singles are not the renders themselves (JPEG, WebP, TIFF).
      { name: bundleParts ? null : 'bundle.zip', kind: 'bundle' },
    ];
    const outputs: RunOutput[] = [];
    for (const f of files) {
      if (!f.name) continue;
      const bytes = (await stat(path.join(workDir, f.name))).size;
      await rt.storage.putFile(keyOf(f.name), path.join(workDir, f.name));
      outputs.push({ name: f.name, kind: f.kind, bytes });
    }
    if (bundleParts) {
      // Every part is a render (a single) or one of the files just stored.
      const keyOfPart = (file: string) => {
        const key = renderKeyOf.get(file);
        if (key) return key;
        const name = path.relative(workDir, file);
        if (name.startsWith('..') || path.isAbsolute(name)) throw new Error(`bundle part ${file} is neither a render nor an output of this run`);
        return keyOf(name);
      };
      const parts = bundleParts.map((p) => ({ name: p.name, size: p.size, crc: p.crc, key: keyOfPart(p.source) }));
      const layout = composedZipLayout(parts, BUNDLE_MTIME);
      await rt.storage.put(layoutKeyOf(keyOf('bundle.zip')), Buffer.from(JSON.stringify(layout)));
      outputs.push({ name: 'bundle.zip', kind: 'bundle', bytes: layout.size });
    }
    const byId = new Map(cards.map((c) => [`${c.role}:${c.source}`, c.id]));
    // One statement for every card's final findings, not one round trip per card.
    await setCardsFindings(
      rt.db,
      report.cards.flatMap((rc) => {
        const id = byId.get(`${rc.role}:${rc.source}`);
        return id ? [{ id, findings: rc.findings, outputs: rc.outputs }] : [];
      }),
    );
    const totals: RunTotals = {
      cards: report.totals.cards,
      pages: report.totals.pages,
      paddingAdded: report.totals.paddingAdded,
      findingsByCode: report.totals.findingsByCode,
    };
    const counts = await countCards(rt.db, runId);
    const done = await transitionRun(rt.db, runId, ['running'], 'done', {
      totals: JSON.stringify(totals),
      outputs: JSON.stringify(outputs),
      counts: JSON.stringify(counts),
      finished_at: rt.db.fn.now(),
    });
    if (done) await mailRunEnded(rt, runId);
  } catch (err) {
    rt.logger.error({ err, runId }, 'assemble failed');
    await finishRunFailed(rt, runId, `ASSEMBLE_FAILED: ${storageFailure(err)}`);
  } finally {
    await rm(workDir, { recursive: true, force: true });
  }
}

// File-system errors as a sentence for the run page: what went wrong and what to do, without the
// server's paths (the log keeps the full error).
const STORAGE_REASONS: Record<string, string> = {
  ENOSPC: 'the storage disk is full',
  EDQUOT: 'the storage quota is used up',
  EACCES: 'the storage folder could not be written (permissions)',
  EPERM: 'the storage folder could not be written (permissions)',
  EROFS: 'the storage is read-only',
  ENOTDIR: 'the storage folder is missing or is not a folder',
  ENOENT: 'the storage folder is missing',
  EISDIR: 'the storage holds a folder where a file was expected',
  EIO: 'the storage disk reported an input/output error',
};

function storageFailure(err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  const known = code ? STORAGE_REASONS[code] : undefined;
  if (known) return `${known} (${code}); the outputs were not written. Fix the storage and start the run again.`;
  return (err as Error).message.split('\n')[0] ?? 'unknown error';
}
