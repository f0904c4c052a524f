import type { Knex } from 'knex';

export interface SignInCounter {
  failures: number;
  window_start: Date;
  locked_until: Date | null;
  lockouts: number;
  updated_at: Date;
}

/**
 * Moves counters on under row locks (taken in the order given), so attempts counted by several server
 * processes at once all count. `next` gets the rows as stored (a new row starts at zero in a window
 * opening `now`) and returns them changed.
 */
export async function updateCounters(db: Knex, keys: string[], now: Date, next: (rows: SignInCounter[]) => SignInCounter[]): Promise<void> {
  await db.transaction(async (trx) => {
    const rows: SignInCounter[] = [];
    for (const key of keys) {
      await trx('sign_in_limits').insert({ key, failures: 0, window_start: now, locked_until: null, lockouts: 0, updated_at: now }).onConflict('key').ignore();
      const { key: _key, ...row } = await trx('sign_in_limits').where({ key }).forUpdate().first();
      rows.push(row as SignInCounter);
    }
    const updated = next(rows);
    for (const [i, key] of keys.entries()) await trx('sign_in_limits').where({ key }).update(updated[i]!);
  });
}

export async function deleteCounter(db: Knex, key: string): Promise<void> {
  await db('sign_in_limits').where({ key }).delete();
}

/** Drops counters nobody tried against since `before` (their lock-outs have long ended). */
export async function pruneCounters(db: Knex, before: Date): Promise<void> {
  await db('sign_in_limits').where('updated_at', '<', before).delete();
}
