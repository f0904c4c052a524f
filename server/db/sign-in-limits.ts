import type { Knex } from 'knex';

export interface SignInCounter {
  failures: number;
  window_start: Date;
  locked_until: Date | null;
  lockouts: number;
  updated_at: Date;
}
export interface SignInCounterRow extends SignInCounter {
  key: string;
}

export async function findCounters(db: Knex, keys: string[]): Promise<SignInCounterRow[]> {
  return db<SignInCounterRow>('sign_in_limits').whereIn('key', keys);
}

/**
 * Moves one counter on under a row lock, so failures counted by several server processes at once all
 * count. `next` gets the row as stored (a new row starts at zero failures in a window opening `now`).
 */
export async function updateCounter(db: Knex, key: string, now: Date, next: (row: SignInCounter) => SignInCounter): Promise<SignInCounter> {
  return db.transaction(async (trx) => {
    await trx('sign_in_limits').insert({ key, failures: 0, window_start: now, locked_until: null, lockouts: 0, updated_at: now }).onConflict('key').ignore();
    const row = await trx<SignInCounterRow>('sign_in_limits').where({ key }).forUpdate().first();
    const updated = next(row!);
    await trx('sign_in_limits').where({ key }).update(updated);
    return updated;
  });
}

export async function deleteCounter(db: Knex, key: string): Promise<void> {
  await db('sign_in_limits').where({ key }).delete();
}

/** Drops counters nobody failed against since `before` (their lock-outs have long ended). */
export async function pruneCounters(db: Knex, before: Date): Promise<void> {
  await db('sign_in_limits').where('updated_at', '<', before).delete();
}
