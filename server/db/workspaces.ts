import type { Knex } from 'knex';
import type { Role } from '../roles.ts';

export interface WorkspaceRow {
  id: string;
  name: string;
  slug: string;
  created_at: Date;
}

export interface WorkspaceWithRole extends WorkspaceRow {
  role: Role;
}

export async function findWorkspaceById(db: Knex, id: string): Promise<WorkspaceRow | undefined> {
  return db<WorkspaceRow>('workspaces').where({ id }).first();
}

export async function findWorkspaceBySlug(db: Knex, slug: string): Promise<WorkspaceRow | undefined> {
  return db<WorkspaceRow>('workspaces').where({ slug }).first();
}

export async function insertWorkspace(db: Knex, ws: { name: string; slug: string }): Promise<WorkspaceRow> {
  const [row] = await db<WorkspaceRow>('workspaces').insert(ws).returning('*');
  return row;
}

export async function listWorkspacesForUser(db: Knex, userId: string): Promise<WorkspaceWithRole[]> {
  return db('workspaces as w')
    .join('memberships as m', 'm.workspace_id', 'w.id')
    .where('m.user_id', userId)
    .select('w.*', 'm.role')
    .orderBy('w.name');
}
