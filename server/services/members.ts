import type { Knex } from 'knex';
import { AppError, notFound } from '../errors.ts';
import { countOwners, deleteMembership, findMembership, listMembers, updateMembershipRole } from '../db/memberships.ts';
import type { Role } from '../roles.ts';

const lastOwner = () =>
  new AppError(409, 'LAST_OWNER', 'A workspace needs at least one owner: make someone else owner first.');

export { listMembers };

export async function changeMemberRole(db: Knex, workspaceId: string, userId: string, role: Role): Promise<void> {
  await db.transaction(async (trx) => {
    const member = await findMembership(trx, workspaceId, userId);
    if (!member) throw notFound('That member');
    if (member.role === 'owner' && role !== 'owner') {
      await trx.raw('select 1 from memberships where workspace_id = ? for update', [workspaceId]);
      if ((await countOwners(trx, workspaceId)) <= 1) throw lastOwner();
    }
    await updateMembershipRole(trx, workspaceId, userId, role);
  });
}

export async function removeMember(db: Knex, workspaceId: string, userId: string): Promise<void> {
  await db.transaction(async (trx) => {
    const member = await findMembership(trx, workspaceId, userId);
    if (!member) throw notFound('That member');
    if (member.role === 'owner') {
      await trx.raw('select 1 from memberships where workspace_id = ? for update', [workspaceId]);
      if ((await countOwners(trx, workspaceId)) <= 1) throw lastOwner();
    }
    await deleteMembership(trx, workspaceId, userId);
  });
}
