import { Router } from 'express';
import { artSetDetailQuerySchema, artSetUploadFieldsSchema, thumbnailQuerySchema, type ArtSetListResponse, type ArtSetResponse, type ArtSetUploadResponse } from '../../shared/api/runs.ts';
import type { AppDeps } from '../context.ts';
import { AppError, notFound } from '../errors.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';
import { addFilesToArtSet, artSetDetail, artSetSummaries, entryThumbnail, importArtSetZip } from '../services/art-sets.ts';
import { parseId } from './recipes.ts';
import { sendStored } from '../storage-send.ts';
import { WRITERS } from './runs.ts';
import { engineError, removeUploads, uploadMiddleware } from './upload.ts';

/** Mounted at /api/workspaces/:workspaceId/art-sets. */
export function artSetRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const { db } = deps;
  const { storage, config } = deps.runs;
  const artDeps = { db, storage, tmpDir: config.tmpDir };
  const read = requireMember(db, ANY_ROLE);
  const write = requireMember(db, WRITERS);

  router.get('/', read, async (req, res) => {
    const body: ArtSetListResponse = { artSets: await artSetSummaries(db, req.member!.workspaceId) };
    res.json(body);
  });

  router.post('/', write, uploadMiddleware({ tmpDir: config.tmpDir, maxBytes: config.uploadMaxBytes, field: 'file', maxFiles: 1 }), async (req, res) => {
    try {
      if (!req.file) throw new AppError(400, 'UPLOAD_MISSING', 'Choose a zip file of card images to upload (form field "file").');
      const fields = artSetUploadFieldsSchema.parse(req.body ?? {});
      const name = fields.name ?? req.file.originalname.replace(/\.zip$/i, '').slice(0, 120);
      const result = await importArtSetZip(artDeps, { workspaceId: req.member!.workspaceId, userId: req.member!.userId, tempFile: req.file.path, name });
      // A deduplicated upload answers with the revision holding those bytes (not always the latest).
      const body: ArtSetUploadResponse = { artSet: await artSetDetail(db, req.member!.workspaceId, result.artSetId, result.revision), deduplicated: result.deduplicated };
      res.status(result.deduplicated ? 200 : 201).json(body);
    } catch (err) {
      throw engineError(err);
    } finally {
      await removeUploads(req);
    }
  });

  router.get('/:artSetId', read, async (req, res) => {
    const q = artSetDetailQuerySchema.safeParse(req.query);
    if (!q.success) throw notFound('That art set revision');
    const body: ArtSetResponse = { artSet: await artSetDetail(db, req.member!.workspaceId, parseId(req.params.artSetId, 'That art set'), q.data.revision) };
    res.json(body);
  });

  router.get('/:artSetId/revisions/:revision/thumbnail', read, async (req, res) => {
    const revision = Number(req.params.revision);
    if (!Number.isInteger(revision) || revision < 1) throw notFound('That art set revision');
    const { path } = thumbnailQuerySchema.parse(req.query);
    const key = await entryThumbnail(artDeps, req.member!.workspaceId, parseId(req.params.artSetId, 'That art set'), revision, path);
    await sendStored(res, storage, key, { contentType: 'image/webp', cacheControl: 'private, max-age=86400, immutable' });
  });

  router.post('/:artSetId/files', write, uploadMiddleware({ tmpDir: config.tmpDir, maxBytes: config.uploadMaxBytes, field: 'files', maxFiles: 50 }), async (req, res) => {
    try {
      const artSetId = parseId(req.params.artSetId, 'That art set');
      const files = Array.isArray(req.files) ? req.files : [];
      if (files.length === 0) throw new AppError(400, 'UPLOAD_MISSING', 'Choose one or more images to add (form field "files").');
      const result = await addFilesToArtSet(artDeps, {
        workspaceId: req.member!.workspaceId,
        artSetId,
        userId: req.member!.userId,
        files: files.map((f) => ({ name: f.originalname, tempFile: f.path })),
      });
      const body: ArtSetResponse = { artSet: await artSetDetail(db, req.member!.workspaceId, result.artSetId) };
      res.status(201).json(body);
    } catch (err) {
      throw engineError(err);
    } finally {
      await removeUploads(req);
    }
  });

  return router;
}
