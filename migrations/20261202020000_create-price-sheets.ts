import type { Knex } from 'knex';

// Price sheets a workspace keeps for the print planner (issue 5): deck size tiers and stock options
// as JSON (always read and written whole), the setup fee and its waiver threshold as columns.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('price_sheets', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.text('name').notNullable();
    t.text('currency').notNullable();
    t.jsonb('tiers').notNullable();
    t.decimal('setup_fee', 12, 2).notNullable().defaultTo(0);
    t.integer('setup_waived_at_sets');
    t.jsonb('stocks').notNullable().defaultTo('[]');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.unique(['workspace_id', 'name']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('price_sheets');
}
