import type { Knex } from 'knex';
import type { Finding } from '../../shared/findings.ts';
import type { CardState } from '../../shared/run-states.ts';
import type { RunCounts } from './runs.ts';

export interface RunCardRow {
  id: string;
  run_id: string;
  seq: number;
  source: string;
  role: 'front' | 'back';
  title: string | null;
  state: CardState;
  source_sha256: string;
  cached: boolean;
  outputs: string[];
  info: Record<string, unknown> | null;
  findings: Finding[];
  attempt: number;
  finished_at: Date | null;
  /** Fronts: 1-based place in the engine's print order, before copies. Null for backs and older runs. */
  deck_order: number | null;
  /** Fronts: copies in the deck (manifest, default 1). Null for backs and older runs. */
  copies: number | null;
  /** Fronts: art-set path of the back printed on its reverse, if any. */
  back_source: string | null;
}

export const OPEN_CARD_STATES: CardState[] = ['pending', 'rendering'];

/** Inserts the planned cards; a retried plan inserts nothing twice. */
export async function insertCards(
  db: Knex,
  runId: string,
  cards: Array<Pick<RunCardRow, 'seq' | 'source' | 'role' | 'title' | 'source_sha256'> & Partial<Pick<RunCardRow, 'deck_order' | 'copies' | 'back_source'>>>,
): Promise<void> {
  if (cards.length === 0) return;
  await db('run_cards')
    .insert(cards.map((c) => ({ ...c, run_id: runId })))
    .onConflict(['run_id', 'source', 'role'])
    .ignore();
}

export async function listCards(db: Knex, runId: string): Promise<RunCardRow[]> {
  return db<RunCardRow>('run_cards').where({ run_id: runId }).orderBy('seq');
}

export async function findCard(db: Knex, id: string): Promise<RunCardRow | undefined> {
  return db<RunCardRow>('run_cards').where({ id }).first();
}

/** Claims a card for a render attempt; undefined when it is already settled. */
export async function claimCard(db: Knex, id: string): Promise<RunCardRow | undefined> {
  const [row] = await db<RunCardRow>('run_cards')
    .where({ id })
    .whereIn('state', OPEN_CARD_STATES)
    .update({ state: 'rendering', attempt: db.raw('attempt + 1') as unknown as number })
    .returning('*');
  return row;
}

/** Settles a card unless it is already settled: a stale attempt never overwrites a newer result. */
export async function settleCard(
  db: Knex,
  id: string,
  result: Pick<RunCardRow, 'state' | 'cached' | 'outputs' | 'info' | 'findings'>,
): Promise<boolean> {
  const count = await db('run_cards')
    .where({ id })
    .whereIn('state', OPEN_CARD_STATES)
    .update({
      state: result.state,
      cached: result.cached,
      outputs: JSON.stringify(result.outputs),
      info: result.info === null ? null : JSON.stringify(result.info),
      findings: JSON.stringify(result.findings),
      finished_at: db.fn.now(),
    });
  return count > 0;
}

/**
 * settleCard for many cards in one statement (a rerun settles most cards from the cache): each row is
 * settled unless it is already settled. Returns how many were.
 */
export async function settleCards(
  db: Knex,
  rows: ReadonlyArray<{ id: string } & Pick<RunCardRow, 'state' | 'cached' | 'outputs' | 'info' | 'findings'>>,
): Promise<number> {
  if (rows.length === 0) return 0;
  const result = await db.raw(
    `update run_cards c set state = v.state, cached = v.cached, outputs = v.outputs, info = v.info, findings = v.findings, finished_at = now()
       from jsonb_to_recordset(?::jsonb) as v(id uuid, state text, cached boolean, outputs jsonb, info jsonb, findings jsonb)
      where c.id = v.id and c.state in ('pending', 'rendering')`,
    [JSON.stringify(rows.map((r) => ({ id: r.id, state: r.state, cached: r.cached, outputs: r.outputs, info: r.info, findings: r.findings })))],
  );
  return result.rowCount ?? 0;
}

/** Sets the final findings and output names of many cards in one statement (assembly). */
export async function setCardsFindings(db: Knex, rows: ReadonlyArray<{ id: string; findings: Finding[]; outputs: string[] }>): Promise<void> {
  if (rows.length === 0) return;
  await db.raw(
    `update run_cards c set findings = v.findings, outputs = v.outputs
       from jsonb_to_recordset(?::jsonb) as v(id uuid, findings jsonb, outputs jsonb)
      where c.id = v.id`,
    [JSON.stringify(rows)],
  );
}

/** Marks every unsettled card of a canceled run as canceled. */
export async function cancelOpenCards(db: Knex, runId: string): Promise<void> {
  await db('run_cards').where({ run_id: runId }).whereIn('state', ['pending']).update({ state: 'canceled', finished_at: db.fn.now() });
}

/** Progress counted from the card rows (never added up blindly, so retries cannot double count). */
export async function countCards(db: Knex, runId: string): Promise<RunCounts & { open: number }> {
  const row = await db('run_cards')
    .where({ run_id: runId })
    .select(
      db.raw('count(*)::int as total'),
      db.raw(`count(*) filter (where state = 'done')::int as done`),
      db.raw(`count(*) filter (where state = 'skipped')::int as skipped`),
      db.raw(`count(*) filter (where state = 'failed')::int as failed`),
      db.raw(`count(*) filter (where state = 'canceled')::int as canceled`),
      db.raw(`count(*) filter (where cached)::int as cached`),
      db.raw(`count(*) filter (where state in ('pending', 'rendering'))::int as open`),
      db.raw(`coalesce(sum((select count(*) from jsonb_array_elements(findings) f where f->>'severity' = 'info')), 0)::int as f_info`),
      db.raw(`coalesce(sum((select count(*) from jsonb_array_elements(findings) f where f->>'severity' = 'warn')), 0)::int as f_warn`),
      db.raw(`coalesce(sum((select count(*) from jsonb_array_elements(findings) f where f->>'severity' = 'error')), 0)::int as f_error`),
    )
    .first();
  return {
    total: row.total,
    done: row.done,
    skipped: row.skipped,
    failed: row.failed,
    canceled: row.canceled,
    cached: row.cached,
    open: row.open,
    findings: { info: row.f_info, warn: row.f_warn, error: row.f_error },
  };
}
