import { Router } from 'express';
import type { AppDeps } from '../context.ts';
import { notFound } from '../errors.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';
import type { Role } from '../roles.ts';
import { createPriceSheet, deletePriceSheet, getPriceSheet, listPriceSheets, updatePriceSheet } from '../services/price-sheets.ts';
import { priceSheetBodySchema, priceSheetIdSchema } from './price-sheets.schema.ts';

/** Owners and makers keep the price sheets; helpers read them to price an order. */
const WRITERS: readonly Role[] = ['owner', 'maker'];

/** Mounted at /api/workspaces/:workspaceId/price-sheets. */
export function priceSheetRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const sheetId = (raw: unknown) => {
    const parsed = priceSheetIdSchema.safeParse(raw);
    if (!parsed.success) throw notFound('That price sheet');
    return parsed.data;
  };

  router.get('/', requireMember(deps.db, ANY_ROLE), async (req, res) => {
    res.json({ priceSheets: await listPriceSheets(deps.db, req.member!.workspaceId) });
  });

  router.post('/', requireMember(deps.db, WRITERS), async (req, res) => {
    const settings = priceSheetBodySchema.parse(req.body);
    res.status(201).json({ priceSheet: await createPriceSheet(deps.db, req.member!.workspaceId, settings, req.member!.userId) });
  });

  router.get('/:priceSheetId', requireMember(deps.db, ANY_ROLE), async (req, res) => {
    res.json({ priceSheet: await getPriceSheet(deps.db, req.member!.workspaceId, sheetId(req.params.priceSheetId)) });
  });

  // The whole sheet is sent and replaced: a price list is edited as one form.
  router.patch('/:priceSheetId', requireMember(deps.db, WRITERS), async (req, res) => {
    const id = sheetId(req.params.priceSheetId);
    const settings = priceSheetBodySchema.parse(req.body);
    res.json({ priceSheet: await updatePriceSheet(deps.db, req.member!.workspaceId, id, settings, deps.clock()) });
  });

  router.delete('/:priceSheetId', requireMember(deps.db, WRITERS), async (req, res) => {
    await deletePriceSheet(deps.db, req.member!.workspaceId, sheetId(req.params.priceSheetId));
    res.status(204).end();
  });

  return router;
}
