import type { Knex } from 'knex';

// Failed sign-in counters (issue 6), shared by every server process on the database. `key` is the
// sha256 of "address+IP" or "IP" (no typed address is kept in clear); a row counts failures in the
// window that began at `window_start`, and `locked_until` holds a running lock-out. `lockouts` makes each
// further lock-out of the same key longer; rows idle for a day are pruned.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('sign_in_limits', (t) => {
    t.text('key').primary();
    t.integer('failures').notNullable().defaultTo(0);
    t.timestamp('window_start', { useTz: true }).notNullable();
    t.timestamp('locked_until', { useTz: true });
    t.integer('lockouts').notNullable().defaultTo(0);
    t.timestamp('updated_at', { useTz: true }).notNullable();
    t.index(['updated_at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('sign_in_limits');
}
