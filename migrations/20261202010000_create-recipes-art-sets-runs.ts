import type { Knex } from 'knex';

// Recipes (versioned), art sets (revisioned, content-addressed), runs with per-card rows, the render
// cache, followers and share links (issue 4). Every top-level row carries workspace_id.
export async function up(knex: Knex): Promise<void> {
  const id = (t: Knex.CreateTableBuilder) => t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
  const ts = (t: Knex.CreateTableBuilder, name: string) => t.timestamp(name, { useTz: true }).notNullable().defaultTo(knex.fn.now());

  await knex.schema.createTable('recipes', (t) => {
    id(t);
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.text('slug').notNullable();
    t.text('name').notNullable();
    t.timestamp('archived_at', { useTz: true });
    ts(t, 'created_at');
    ts(t, 'updated_at');
    t.unique(['workspace_id', 'slug']);
  });

  await knex.schema.createTable('recipe_versions', (t) => {
    id(t);
    t.uuid('recipe_id').notNullable().references('recipes.id').onDelete('CASCADE');
    t.integer('version').notNullable();
    t.jsonb('settings').notNullable();
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    ts(t, 'created_at');
    t.unique(['recipe_id', 'version']);
  });

  await knex.schema.createTable('art_sets', (t) => {
    id(t);
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.text('name').notNullable();
    ts(t, 'created_at');
    ts(t, 'updated_at');
    t.index(['workspace_id']);
  });

  await knex.schema.createTable('art_set_revisions', (t) => {
    id(t);
    t.uuid('art_set_id').notNullable().references('art_sets.id').onDelete('CASCADE');
    // Copied from the art set so the dedupe constraint can be per workspace.
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.integer('revision').notNullable();
    t.text('sha256').notNullable();
    t.bigInteger('bytes').notNullable();
    t.text('note');
    t.jsonb('skipped').notNullable().defaultTo('[]');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    ts(t, 'created_at');
    t.unique(['art_set_id', 'revision']);
    t.unique(['workspace_id', 'sha256']);
  });

  await knex.schema.createTable('art_set_entries', (t) => {
    id(t);
    t.uuid('revision_id').notNullable().references('art_set_revisions.id').onDelete('CASCADE');
    t.text('path').notNullable();
    t.text('kind').notNullable();
    t.bigInteger('bytes').notNullable();
    t.text('sha256').notNullable();
    t.integer('width');
    t.integer('height');
    t.text('format');
    t.unique(['revision_id', 'path']);
  });

  await knex.schema.createTable('runs', (t) => {
    id(t);
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.uuid('recipe_version_id').notNullable().references('recipe_versions.id').onDelete('RESTRICT');
    t.uuid('art_set_revision_id').notNullable().references('art_set_revisions.id').onDelete('RESTRICT');
    t.text('state').notNullable().defaultTo('queued');
    t.jsonb('counts').notNullable().defaultTo('{}');
    t.jsonb('totals');
    t.jsonb('outputs').notNullable().defaultTo('[]');
    t.jsonb('diff');
    t.text('error');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.uuid('previous_run_id').references('runs.id').onDelete('SET NULL');
    ts(t, 'created_at');
    t.timestamp('started_at', { useTz: true });
    t.timestamp('finished_at', { useTz: true });
    t.index(['workspace_id', 'created_at']);
  });
  await knex.raw(`alter table runs add constraint runs_state_check check (state in ('queued', 'running', 'done', 'failed', 'canceled'))`);

  await knex.schema.createTable('run_cards', (t) => {
    id(t);
    t.uuid('run_id').notNullable().references('runs.id').onDelete('CASCADE');
    t.integer('seq').notNullable();
    t.text('source').notNullable();
    t.text('role').notNullable();
    t.text('title');
    t.text('state').notNullable().defaultTo('pending');
    t.text('source_sha256').notNullable();
    t.boolean('cached').notNullable().defaultTo(false);
    t.jsonb('outputs').notNullable().defaultTo('[]');
    t.jsonb('info');
    t.jsonb('findings').notNullable().defaultTo('[]');
    t.integer('attempt').notNullable().defaultTo(0);
    t.timestamp('finished_at', { useTz: true });
    t.unique(['run_id', 'source', 'role']);
    t.index(['run_id', 'state']);
  });
  await knex.raw(
    `alter table run_cards add constraint run_cards_state_check check (state in ('pending', 'rendering', 'done', 'skipped', 'failed', 'canceled'))`,
  );

  await knex.schema.createTable('render_cache', (t) => {
    id(t);
    t.uuid('workspace_id').notNullable().references('workspaces.id').onDelete('CASCADE');
    t.uuid('recipe_version_id').notNullable().references('recipe_versions.id').onDelete('CASCADE');
    t.text('source_sha256').notNullable();
    // The file name takes part in conforming (turn rules, extension checks), so it is part of the key.
    t.text('source_path').notNullable();
    t.jsonb('info').notNullable();
    t.text('storage_key');
    ts(t, 'created_at');
    t.unique(['workspace_id', 'recipe_version_id', 'source_sha256', 'source_path']);
  });

  // One row per render actually performed: lets tests (and operators) see that no card was rendered twice.
  await knex.schema.createTable('render_log', (t) => {
    t.bigIncrements('id');
    t.uuid('run_id').notNullable().references('runs.id').onDelete('CASCADE');
    t.uuid('card_id').notNullable();
    t.integer('pid').notNullable();
    ts(t, 'created_at');
    t.index(['run_id']);
  });

  await knex.schema.createTable('run_followers', (t) => {
    t.uuid('run_id').notNullable().references('runs.id').onDelete('CASCADE');
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    ts(t, 'created_at');
    t.primary(['run_id', 'user_id']);
  });

  await knex.schema.createTable('share_links', (t) => {
    id(t);
    t.uuid('run_id').notNullable().references('runs.id').onDelete('CASCADE');
    t.text('token_hash').notNullable().unique();
    t.text('label');
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('revoked_at', { useTz: true });
    t.integer('downloads').notNullable().defaultTo(0);
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    ts(t, 'created_at');
    t.index(['run_id']);
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of ['share_links', 'run_followers', 'render_log', 'render_cache', 'run_cards', 'runs', 'art_set_entries', 'art_set_revisions', 'art_sets', 'recipe_versions', 'recipes']) {
    await knex.schema.dropTable(table);
  }
}
