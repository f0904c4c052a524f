import type { Knex } from 'knex';
import type { Role } from '../roles.ts';

export interface MembershipRow {
  workspace_id: string;
  user_id: string;
  role: Role;
  created_at: Date;
}

export interface MemberView {
  userId: string;
  email: string;
  name: string;
  role: Role;
  joinedAt: Date;
}

export async function findMembership(db: Knex, workspaceId: string, userId: string): Promise<MembershipRow | undefined> {
  return db<MembershipRow>('memberships').where({ workspace_id: workspaceId, user_id: userId }).first();
}

export async function upsertMembership(db: Knex, workspaceId: string, userId: string, role: Role): Promise<void> {
  await db('memberships')
    .insert({ workspace_id: workspaceId, user_id: userId, role })
    .onConflict(['workspace_id', 'user_id'])
    .merge({ role });
}

export async function listMembers(db: Knex, workspaceId: string): Promise<MemberView[]> {
  return db('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where('m.workspace_id', workspaceId)
    .select('u.id as userId', 'u.email', 'u.name', 'm.role', 'm.created_at as joinedAt')
    .orderByRaw(`case m.role when 'owner' then 0 when 'maker' then 1 else 2 end, lower(u.name)`);
}

export async function countOwners(db: Knex, workspaceId: string): Promise<number> {
  const row = await db('memberships').where({ workspace_id: workspaceId, role: 'owner' }).count<{ count: string }[]>('* as count').first();
  return Number(row?.count ?? 0);
}

export async function updateMembershipRole(db: Knex, workspaceId: string, userId: string, role: Role): Promise<void> {
  await db('memberships').where({ workspace_id: workspaceId, user_id: userId }).update({ role });
}

export async function deleteMembership(db: Knex, workspaceId: string, userId: string): Promise<void> {
  await db('memberships').where({ workspace_id: workspaceId, user_id: userId }).delete();
}
