import type { Knex } from 'knex';

// First-run guide steps a member has done in a workspace, recorded by the server when it happens (a
// card opened at full size, a combined PDF downloaded), so the guide follows the person, not the browser.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('guide_progress', (t) => {
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('step').notNullable();
    t.timestamp('done_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(['workspace_id', 'user_id', 'step']);
  });
  await knex.raw(`alter table guide_progress add constraint guide_progress_step_check check (step in ('proof', 'pdf'))`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('guide_progress');
}
