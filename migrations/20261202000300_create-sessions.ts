import type { Knex } from 'knex';

// Server-side sessions for express-session + connect-pg-simple. The table layout is the one
// connect-pg-simple expects (sid, sess, expire); it is created here, never by the store at runtime.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('sessions', (t) => {
    t.string('sid').primary();
    t.json('sess').notNullable();
    t.timestamp('expire', { precision: 6 }).notNullable();
    t.index(['expire'], 'sessions_expire_index');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('sessions');
}
