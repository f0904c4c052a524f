import { randomBytes } from 'node:crypto';
import { copyFile, mkdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import type { Knex } from 'knex';
import { importArtSetZip } from './services/art-sets.ts';
import { createRecipe } from './services/recipes.ts';
import { startRun, type SendJob } from './services/runs.ts';
import type { Storage } from './storage.ts';
import { findUserByEmail, insertUser, setUserPassword } from './db/users.ts';
import { findWorkspaceBySlug, insertWorkspace } from './db/workspaces.ts';
import { upsertMembership } from './db/memberships.ts';
import { hashPassword, verifyPassword } from './passwords.ts';
import type { Role } from './roles.ts';
import { findPriceSheetByName, insertPriceSheet } from './db/price-sheets.ts';
import { priceSheetBodySchema, type PriceSheetBody } from '../shared/api/price-sheets.ts';

// An invented studio making an invented card game; every name here is made up.
export const DEMO_WORKSPACE = { name: 'Tidewhistle Orchard', slug: 'tidewhistle-orchard' };

export interface DemoAccount {
  role: Role;
  name: string;
  email: string;
  password: string;
}

export const DEMO_ACCOUNTS: DemoAccount[] = [
  { role: 'owner', name: 'Oriane Thistlewood', email: 'oriane@example.test', password: 'orchard-owner-2026' },
  { role: 'maker', name: 'Bastian Pellquist', email: 'bastian@example.test', password: 'orchard-maker-2026' },
  { role: 'helper', name: 'Juno Farrowby', email: 'juno@example.test', password: 'orchard-helper-2026' },
];

/** A price sheet for the planner with invented figures: no real printer's tiers or prices. */
export const DEMO_PRICE_SHEET: PriceSheetBody = {
  name: 'Demo price sheet (invented prices)',
  currency: 'EUR',
  tiers: [
    { maxCards: 18, pricePerSet: 3.9 },
    { maxCards: 36, pricePerSet: 5.6 },
    { maxCards: 54, pricePerSet: 7.2 },
    { maxCards: 72, pricePerSet: 8.8 },
    { maxCards: 108, pricePerSet: 11.9 },
    { maxCards: 126, pricePerSet: 13.4 },
    { maxCards: 162, pricePerSet: 16.1 },
  ],
  setupFee: 24,
  setupWaivedAtSets: 12,
  stocks: [
    { name: 'Smooth 300 gsm', surchargePerSet: 0 },
    { name: 'Linen 330 gsm', surchargePerSet: 1.2 },
    { name: 'Plastic', surchargePerSet: 4.5 },
  ],
};

/**
 * Creates the demo workspace and one account per role, or brings them back to the printed state
 * (same passwords and roles) when they exist. Safe to run on every start.
 */
export async function seedDemo(db: Knex): Promise<{ workspaceId: string; accounts: DemoAccount[] }> {
  const workspace = (await findWorkspaceBySlug(db, DEMO_WORKSPACE.slug)) ?? (await insertWorkspace(db, DEMO_WORKSPACE));
  for (const account of DEMO_ACCOUNTS) {
    const existing = await findUserByEmail(db, account.email);
    let userId: string;
    if (!existing) {
      userId = (await insertUser(db, { email: account.email, name: account.name, passwordHash: await hashPassword(account.password) })).id;
    } else {
      userId = existing.id;
      if (!(await verifyPassword(existing.password_hash, account.password))) {
        await setUserPassword(db, userId, await hashPassword(account.password));
      }
    }
    await upsertMembership(db, workspace.id, userId, account.role);
  }
  if (!(await findPriceSheetByName(db, workspace.id, DEMO_PRICE_SHEET.name))) {
    await insertPriceSheet(db, workspace.id, priceSheetBodySchema.parse(DEMO_PRICE_SHEET), null);
  }
  return { workspaceId: workspace.id, accounts: DEMO_ACCOUNTS };
}

// Runs demo (issue 4): the sample recipe (samples/poker.json) and the sample art set
// (samples/cinderbrook.zip, an invented card game), and one run of them on the first start.
export const DEMO_RECIPE_FILE = 'samples/poker.json';
export const DEMO_ART_FILE = 'samples/cinderbrook.zip';

export async function seedRunsDemo(
  deps: { db: Knex; storage: Storage; tmpDir: string; send: SendJob },
  workspaceId: string,
): Promise<void> {
  const owner = await demoOwner(deps.db, workspaceId);
  const settings = JSON.parse(await readFile(DEMO_RECIPE_FILE, 'utf8'));
  const existing = await deps.db('recipes').where({ workspace_id: workspaceId, name: settings.name }).first('id');
  const recipeId = existing?.id ?? (await createRecipe(deps.db, workspaceId, owner, settings)).id;
  await mkdir(deps.tmpDir, { recursive: true });
  const temp = path.join(deps.tmpDir, `seed-${randomBytes(6).toString('hex')}.zip`);
  await copyFile(DEMO_ART_FILE, temp);
  const art = await importArtSetZip({ db: deps.db, storage: deps.storage, tmpDir: deps.tmpDir }, { workspaceId, userId: owner, tempFile: temp, name: 'Cinderbrook Couriers art', note: 'Demo art set' });
  const anyRun = await deps.db('runs').where({ workspace_id: workspaceId }).first('id');
  if (!anyRun) await startRun(deps, { workspaceId, userId: owner, recipeId, artSetId: art.artSetId });
}

async function demoOwner(db: Knex, workspaceId: string): Promise<string | null> {
  const row = await db('memberships').where({ workspace_id: workspaceId, role: 'owner' }).orderBy('created_at').first('user_id');
  return row?.user_id ?? null;
}
