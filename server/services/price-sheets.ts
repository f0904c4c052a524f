// Price sheets of a workspace. Every query is scoped by workspace id, so another workspace's sheet
// is simply not found (404), as DESIGN.md asks for every object.
import type { Knex } from 'knex';
import type { PriceSheet, PriceSheetSettings } from '../../shared/api/price-sheets.ts';
import { AppError, notFound } from '../errors.ts';
import * as sheets from '../db/price-sheets.ts';

const nameTaken = (name: string) => new AppError(409, 'PRICE_SHEET_NAME_TAKEN', `A price sheet named "${name}" already exists in this workspace: pick another name.`);

function isUniqueViolation(err: unknown): boolean {
  return typeof err === 'object' && err !== null && (err as { code?: string }).code === '23505';
}

export async function listPriceSheets(db: Knex, workspaceId: string): Promise<PriceSheet[]> {
  return (await sheets.listPriceSheets(db, workspaceId)).map(sheets.toPriceSheet);
}

export async function getPriceSheet(db: Knex, workspaceId: string, id: string): Promise<PriceSheet> {
  const row = await sheets.findPriceSheet(db, workspaceId, id);
  if (!row) throw notFound('That price sheet');
  return sheets.toPriceSheet(row);
}

export async function createPriceSheet(db: Knex, workspaceId: string, settings: PriceSheetSettings, userId: string | null): Promise<PriceSheet> {
  try {
    return sheets.toPriceSheet(await sheets.insertPriceSheet(db, workspaceId, settings, userId));
  } catch (err) {
    if (isUniqueViolation(err)) throw nameTaken(settings.name);
    throw err;
  }
}

export async function updatePriceSheet(db: Knex, workspaceId: string, id: string, settings: PriceSheetSettings, now: Date): Promise<PriceSheet> {
  let row;
  try {
    row = await sheets.updatePriceSheet(db, workspaceId, id, settings, now);
  } catch (err) {
    if (isUniqueViolation(err)) throw nameTaken(settings.name);
    throw err;
  }
  if (!row) throw notFound('That price sheet');
  return sheets.toPriceSheet(row);
}

export async function deletePriceSheet(db: Knex, workspaceId: string, id: string): Promise<void> {
  if ((await sheets.deletePriceSheet(db, workspaceId, id)) === 0) throw notFound('That price sheet');
}
