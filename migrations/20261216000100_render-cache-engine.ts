import type { Knex } from 'knex';

// The worker render cache also keys on the engine that made a render (ENGINE_TAG: render version and
// image library version), so a render made by an older engine is made again after an upgrade instead
// of being reused. Rows from before this column get '' and never match a current engine.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('render_cache', (t) => {
    t.text('engine').notNullable().defaultTo('');
    t.dropUnique(['workspace_id', 'recipe_version_id', 'source_sha256', 'source_path']);
    t.unique(['workspace_id', 'recipe_version_id', 'engine', 'source_sha256', 'source_path']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex('render_cache').whereNot({ engine: '' }).delete();
  await knex.schema.alterTable('render_cache', (t) => {
    t.dropUnique(['workspace_id', 'recipe_version_id', 'engine', 'source_sha256', 'source_path']);
    t.dropColumn('engine');
    t.unique(['workspace_id', 'recipe_version_id', 'source_sha256', 'source_path']);
  });
}
