import { Router, type Request, type Response } from 'express';
import {
  cardImageQuerySchema,
  cardListQuerySchema,
  createShareBodySchema,
  followBodySchema,
  runListQuerySchema,
  startRunBodySchema,
  type RunCardsResponse,
  type RunListResponse,
  type RunResponse,
  type ShareCreatedResponse,
  type ShareListResponse,
} from '../../shared/api/runs.ts';
import type { Role } from '../roles.ts';
import type { AppDeps } from '../context.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';
import { recordGuideStep } from '../db/guide-progress.ts';
import { cancelRun, cardImage, followRun, runCards, runDetail, runOutputFile, runSummaries, startRun } from '../services/runs.ts';
import { createShare, revoke, shareList } from '../services/shares.ts';
import { parseId } from './recipes.ts';
import type { Storage } from '../storage.ts';
import { sendStored } from '../storage-send.ts';
import { layoutKeyOf, sendComposedZip } from '../composed-zip.ts';

/** Owners and makers write recipes, art sets, runs and share links; helpers read and download. */
export const WRITERS: readonly Role[] = ['owner', 'maker'];

/**
 * Sends a stored file as a download the browser will not try to render (object storage: 302 to a
 * presigned URL). A run's bundle is kept as the layout of a composed zip and streamed from its parts.
 */
export async function sendAttachment(req: Request, res: Response, storage: Storage, key: string, name: string): Promise<void> {
  if (name.endsWith('.zip') && (await storage.exists(layoutKeyOf(key)))) return sendComposedZip(req, res, storage, layoutKeyOf(key), name);
  return sendStored(res, storage, key, { filename: name, contentType: downloadType(name), cacheControl: 'private, no-store' });
}

const DOWNLOAD_TYPES: Record<string, string> = { '.pdf': 'application/pdf', '.zip': 'application/zip', '.json': 'application/json', '.csv': 'text/csv' };
const downloadType = (name: string) => DOWNLOAD_TYPES[name.slice(name.lastIndexOf('.')).toLowerCase()] ?? 'application/octet-stream';

/** Mounted at /api/workspaces/:workspaceId/runs. */
export function runRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const { db } = deps;
  const { storage, send } = deps.runs;
  const read = requireMember(db, ANY_ROLE);
  const write = requireMember(db, WRITERS);
  const runId = (raw: unknown) => parseId(raw, 'That run');
  const detail = async (ws: string, id: string, user: string): Promise<RunResponse> => ({ run: await runDetail(db, ws, id, user) });

  router.get('/', read, async (req, res) => {
    const { limit } = runListQuerySchema.parse(req.query);
    const body: RunListResponse = { runs: await runSummaries(db, req.member!.workspaceId, limit) };
    res.json(body);
  });

  router.post('/', write, async (req, res) => {
    const input = startRunBodySchema.parse(req.body);
    const id = await startRun({ db, send }, { workspaceId: req.member!.workspaceId, userId: req.member!.userId, ...input });
    res.status(201).json(await detail(req.member!.workspaceId, id, req.member!.userId));
  });

  router.get('/:runId', read, async (req, res) => {
    res.json(await detail(req.member!.workspaceId, runId(req.params.runId), req.member!.userId));
  });

  // Server-sent events: the run detail once a second until it is done, failed or canceled.
  router.get('/:runId/events', read, async (req, res) => {
    const id = runId(req.params.runId);
    const ws = req.member!.workspaceId;
    let last = JSON.stringify(await detail(ws, id, req.member!.userId));
    res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-store', Connection: 'keep-alive', 'X-Accel-Buffering': 'no' });
    res.write(`event: run\ndata: ${last}\n\n`);
    let closed = false;
    req.on('close', () => (closed = true));
    while (!closed && !['done', 'failed', 'canceled'].includes((JSON.parse(last) as RunResponse).run.state)) {
      await new Promise((r) => setTimeout(r, 1000));
      if (closed) break;
      const next = JSON.stringify(await detail(ws, id, req.member!.userId));
      res.write(next === last ? ': still working\n\n' : `event: run\ndata: ${next}\n\n`);
      last = next;
    }
    res.end();
  });

  router.get('/:runId/cards', read, async (req, res) => {
    const { severity } = cardListQuerySchema.parse(req.query);
    const body: RunCardsResponse = { cards: await runCards(db, req.member!.workspaceId, runId(req.params.runId), severity) };
    res.json(body);
  });

  router.get('/:runId/cards/:cardId/image', read, async (req, res) => {
    const { size } = cardImageQuerySchema.parse(req.query);
    const img = await cardImage({ db, storage, workDir: deps.runs.config.workDir }, req.member!.workspaceId, runId(req.params.runId), parseId(req.params.cardId, 'That card'), size);
    // A card looked at full size (the proof viewer asks for it) ticks the guide's "check the proof" step.
    if (size === 'full') await recordGuideStep(db, req.member!.workspaceId, req.member!.userId, 'proof');
    await sendStored(res, storage, img.key, { contentType: img.type, cacheControl: 'private, max-age=3600' });
  });

  router.post('/:runId/cancel', write, async (req, res) => {
    const id = runId(req.params.runId);
    await cancelRun(db, req.member!.workspaceId, id, deps.clock());
    res.json(await detail(req.member!.workspaceId, id, req.member!.userId));
  });

  // Any member may follow a run (to get its end-of-run mail); following changes nothing else.
  router.post('/:runId/follow', read, async (req, res) => {
    const id = runId(req.params.runId);
    const { follow } = followBodySchema.parse(req.body);
    await followRun(db, req.member!.workspaceId, id, req.member!.userId, follow);
    res.json(await detail(req.member!.workspaceId, id, req.member!.userId));
  });

  router.get('/:runId/files/:name', read, async (req, res) => {
    const file = await runOutputFile({ db, storage }, req.member!.workspaceId, runId(req.params.runId), String(req.params.name));
    if (file.kind === 'pdf') await recordGuideStep(db, req.member!.workspaceId, req.member!.userId, 'pdf');
    await sendAttachment(req, res, storage, file.key, file.name);
  });

  router.get('/:runId/shares', write, async (req, res) => {
    const body: ShareListResponse = { shares: await shareList(db, req.member!.workspaceId, runId(req.params.runId)) };
    res.json(body);
  });

  router.post('/:runId/shares', write, async (req, res) => {
    const input = createShareBodySchema.parse(req.body);
    const share = await createShare(db, {
      workspaceId: req.member!.workspaceId,
      runId: runId(req.params.runId),
      userId: req.member!.userId,
      ...input,
      now: deps.clock(),
      publicUrl: deps.config.publicUrl,
    });
    const body: ShareCreatedResponse = { share };
    res.status(201).json(body);
  });

  router.delete('/:runId/shares/:shareId', write, async (req, res) => {
    await revoke(db, req.member!.workspaceId, runId(req.params.runId), parseId(req.params.shareId, 'That share link'), deps.clock());
    res.status(204).end();
  });

  return router;
}
