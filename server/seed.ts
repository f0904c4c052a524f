import type { Knex } from 'knex';
import { findUserByEmail, insertUser, setUserPassword } from './db/users.ts';
import { findWorkspaceBySlug, insertWorkspace } from './db/workspaces.ts';
import { upsertMembership } from './db/memberships.ts';
import { hashPassword, verifyPassword } from './passwords.ts';
import type { Role } from './roles.ts';

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
  return { workspaceId: workspace.id, accounts: DEMO_ACCOUNTS };
}
