import type { Knex } from 'knex';
import type { Finding } from '../../shared/findings.ts';
import type { CardState, RunState } from '../../shared/run-states.ts';
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

/**
 * Claims a card for a render attempt; undefined when it is already settled or, with `runRunning`, when
 * its run is not running (one round trip for the common case; the caller then looks at why).
 */
export async function claimCard(db: Knex, id: string, opts: { runRunning?: boolean } = {}): Promise<RunCardRow | undefined> {
  const query = db<RunCardRow>('run_cards').where({ id }).whereIn('state', OPEN_CARD_STATES);
  if (opts.runRunning) query.whereExists(db('runs').whereRaw('runs.id = run_cards.run_id').where('runs.state', 'running').select(db.raw('1')));
  const [row] = await query.update({ state: 'rendering', attempt: db.raw('attempt + 1') as unknown as number }).returning('*');
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
 * A render performed: logs it, records it in the render cache (a second render of the same key keeps the
 * first row) and settles the card unless it is already settled, in one statement (one round trip, all or
 * nothing). Returns whether this attempt settled the card.
 */
export async function settleRender(
  db: Knex,
  render: {
    runId: string;
    cardId: string;
    cacheKey: { workspace_id: string; recipe_version_id: string; engine: string; source_sha256: string; source_path: string };
    storageKey: string | null;
  },
  result: Pick<RunCardRow, 'state' | 'outputs' | 'info' | 'findings'>,
): Promise<boolean> {
  const k = render.cacheKey;
  const info = result.info === null ? null : JSON.stringify(result.info);
  const updated = await db.raw(
    `with logged as (insert into render_log (run_id, card_id, pid) values (?, ?, ?)),
          cached as (
            insert into render_cache (workspace_id, recipe_version_id, engine, source_sha256, source_path, info, storage_key)
            values (?, ?, ?, ?, ?, ?::jsonb, ?)
            on conflict (workspace_id, recipe_version_id, engine, source_sha256, source_path) do nothing)
     update run_cards set state = ?, cached = false, outputs = ?::jsonb, info = ?::jsonb, findings = ?::jsonb, finished_at = now()
      where id = ? and state in ('pending', 'rendering')`,
    [
      render.runId, render.cardId, process.pid,
      k.workspace_id, k.recipe_version_id, k.engine, k.source_sha256, k.source_path, info, render.storageKey,
      result.state, JSON.stringify(result.outputs), info, JSON.stringify(result.findings), render.cardId,
    ],
  );
  return (updated.rowCount ?? 0) > 0;
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

// A run's progress as stored in runs.counts (RunCounts plus `open`), counted from its card rows.
const severity = (level: string) => `coalesce(sum((select count(*) from jsonb_array_elements(findings) f where f->>'severity' = '${level}')), 0)::int`;
const COUNTS_JSON = `jsonb_build_object(
  'total', count(*)::int,
  'done', count(*) filter (where state = 'done')::int,
  'skipped', count(*) filter (where state = 'skipped')::int,
  'failed', count(*) filter (where state = 'failed')::int,
  'canceled', count(*) filter (where state = 'canceled')::int,
  'cached', count(*) filter (where cached)::int,
  'open', count(*) filter (where state in ('pending', 'rendering'))::int,
  'findings', jsonb_build_object('info', ${severity('info')}, 'warn', ${severity('warn')}, 'error', ${severity('error')}))`;

/** Progress counted from the card rows (never added up blindly, so retries cannot double count). */
export async function countCards(db: Knex, runId: string): Promise<RunCounts & { open: number }> {
  const { rows } = await db.raw(`select ${COUNTS_JSON} as counts from run_cards where run_id = ?`, [runId]);
  return rows[0].counts;
}

/**
 * Recounts a run's progress into runs.counts in one statement; returns the run's state and how many of
 * its cards are still open (undefined when the run is gone).
 */
export async function refreshCounts(db: Knex, runId: string): Promise<{ state: RunState; open: number } | undefined> {
  const { rows } = await db.raw(
    `update runs r set counts = c.counts from (select ${COUNTS_JSON} as counts from run_cards where run_id = ?) c
      where r.id = ? returning r.state, (r.counts->>'open')::int as open`,
    [runId, runId],
  );
  return rows[0];
}

/** Whether any card of the run is still open, and the run's state: exact, without recounting. */
export async function openCardsLeft(db: Knex, runId: string): Promise<{ state: RunState; open: boolean } | undefined> {
  const { rows } = await db.raw(
    `select r.state, exists (select 1 from run_cards c where c.run_id = r.id and c.state in ('pending', 'rendering')) as open from runs r where r.id = ?`,
    [runId],
  );
  return rows[0];
}
