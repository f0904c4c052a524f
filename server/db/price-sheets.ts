import type { Knex } from 'knex';
import type { PriceSheet, PriceSheetSettings } from '../../shared/api/price-sheets.ts';

export interface PriceSheetRow {
  id: string;
  workspace_id: string;
  name: string;
  currency: string;
  tiers: PriceSheetSettings['tiers'];
  setup_fee: string; // numeric comes back from pg as text
  setup_waived_at_sets: number | null;
  stocks: PriceSheetSettings['stocks'];
  created_by: string | null;
  created_at: Date;
  updated_at: Date;
}

export function toPriceSheet(row: PriceSheetRow): PriceSheet {
  return {
    id: row.id,
    name: row.name,
    currency: row.currency,
    tiers: row.tiers,
    setupFee: Number(row.setup_fee),
    setupWaivedAtSets: row.setup_waived_at_sets,
    stocks: row.stocks,
    createdAt: new Date(row.created_at).toISOString(),
    updatedAt: new Date(row.updated_at).toISOString(),
  };
}

function columns(s: PriceSheetSettings) {
  return {
    name: s.name,
    currency: s.currency,
    tiers: JSON.stringify(s.tiers),
    setup_fee: s.setupFee,
    setup_waived_at_sets: s.setupWaivedAtSets,
    stocks: JSON.stringify(s.stocks),
  };
}

export async function listPriceSheets(db: Knex, workspaceId: string): Promise<PriceSheetRow[]> {
  return db<PriceSheetRow>('price_sheets').where({ workspace_id: workspaceId }).orderByRaw('lower(name), created_at');
}

export async function findPriceSheet(db: Knex, workspaceId: string, id: string): Promise<PriceSheetRow | undefined> {
  return db<PriceSheetRow>('price_sheets').where({ workspace_id: workspaceId, id }).first();
}

export async function findPriceSheetByName(db: Knex, workspaceId: string, name: string): Promise<PriceSheetRow | undefined> {
  return db<PriceSheetRow>('price_sheets').where({ workspace_id: workspaceId, name }).first();
}

export async function insertPriceSheet(db: Knex, workspaceId: string, settings: PriceSheetSettings, createdBy: string | null): Promise<PriceSheetRow> {
  const [row] = await db('price_sheets')
    .insert({ workspace_id: workspaceId, created_by: createdBy, ...columns(settings) })
    .returning('*');
  return row as PriceSheetRow;
}

export async function updatePriceSheet(db: Knex, workspaceId: string, id: string, settings: PriceSheetSettings, now: Date): Promise<PriceSheetRow | undefined> {
  const [row] = await db('price_sheets')
    .where({ workspace_id: workspaceId, id })
    .update({ ...columns(settings), updated_at: now })
    .returning('*');
  return row as PriceSheetRow | undefined;
}

export async function deletePriceSheet(db: Knex, workspaceId: string, id: string): Promise<number> {
  return db('price_sheets').where({ workspace_id: workspaceId, id }).delete();
}
