import type { Knex } from 'knex';

// The deck as the engine plans it, stored per card when a run is planned, so the cards API answers
// from rows: a front's place in print order (before copies), its copies (manifest, default 1; 0 leaves
// it out of the deck) and the art-set path of the back printed on its reverse. Backs leave them null,
// and so do runs planned before this migration.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('run_cards', (t) => {
    t.integer('deck_order');
    t.integer('copies');
    t.text('back_source');
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('run_cards', (t) => {
    t.dropColumn('deck_order');
    t.dropColumn('copies');
    t.dropColumn('back_source');
  });
}
