import type { Knex } from 'knex';

// Invitations by e-mail. Only the sha256 of the token is stored: a database leak does not hand out
// working accept links. One-time: accepted_at is set on use.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('invites', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.text('email').notNullable();
    t.text('role').notNullable();
    t.text('token_hash').notNullable().unique();
    t.uuid('invited_by').references('users.id').onDelete('SET NULL');
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('accepted_at', { useTz: true });
    t.uuid('accepted_by').references('users.id').onDelete('SET NULL');
    t.timestamp('revoked_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['workspace_id']);
  });
  await knex.raw(`alter table invites add constraint invites_role_check check (role in ('owner', 'maker', 'helper'))`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('invites');
}
