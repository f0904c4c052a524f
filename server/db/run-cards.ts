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

/** Marks every unsettled card of a canceled run as canceled. */
export async function cancelOpenCards(db: Knex, runId: string): Promise<void> {
  await db('run_cards').where({ run_id: runId }).whereIn('state', ['pending']).update({ state: 'canceled', finished_at: db.fn.now() });
}

export async function setCardFindings(db: Knex, id: string, findings: Finding[], outputs: string[]): Promise<void> {
  await db('run_cards').where({ id }).update({ findings: JSON.stringify(findings), outputs: JSON.stringify(outputs) });
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
