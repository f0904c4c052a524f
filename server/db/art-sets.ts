import type { Knex } from 'knex';
import type { ArtEntryKind } from '../../shared/api/runs.ts';

export interface ArtSetRow {
  id: string;
  workspace_id: string;
  name: string;
  created_at: Date;
  updated_at: Date;
}

export interface ArtSetRevisionRow {
  id: string;
  art_set_id: string;
  workspace_id: string;
  revision: number;
  sha256: string;
  bytes: string;
  note: string | null;
  skipped: Array<{ path: string; reason: string }>;
  created_by: string | null;
  created_at: Date;
}

export interface ArtSetEntryRow {
  id: string;
  revision_id: string;
  path: string;
  kind: ArtEntryKind;
  bytes: string;
  sha256: string;
  width: number | null;
  height: number | null;
  format: string | null;
}

export type NewEntry = Omit<ArtSetEntryRow, 'id' | 'revision_id' | 'bytes'> & { bytes: number };

export async function listArtSets(db: Knex, workspaceId: string) {
  return db('art_sets as a')
    .where('a.workspace_id', workspaceId)
    .join('art_set_revisions as r', function () {
      this.on('r.art_set_id', 'a.id').andOn('r.revision', db.raw('(select max(revision) from art_set_revisions x where x.art_set_id = a.id)'));
    })
    .select(
      'a.*',
      'r.revision',
      db.raw('(select count(*) from art_set_entries e where e.revision_id = r.id)::int as entry_count'),
      db.raw(`(select count(*) from art_set_entries e where e.revision_id = r.id and e.kind in ('image', 'back-candidate'))::int as card_count`),
    )
    .orderBy('a.updated_at', 'desc') as Promise<Array<ArtSetRow & { revision: number; entry_count: number; card_count: number }>>;
}

export async function findArtSet(db: Knex, workspaceId: string, id: string): Promise<ArtSetRow | undefined> {
  return db<ArtSetRow>('art_sets').where({ workspace_id: workspaceId, id }).first();
}

export async function insertArtSet(db: Knex, row: { workspace_id: string; name: string }): Promise<ArtSetRow> {
  const [inserted] = await db<ArtSetRow>('art_sets').insert(row).returning('*');
  return inserted!;
}

export async function touchArtSet(db: Knex, id: string): Promise<void> {
  await db('art_sets').where({ id }).update({ updated_at: db.fn.now() });
}

export async function listRevisions(db: Knex, artSetId: string): Promise<Array<ArtSetRevisionRow & { entry_count: number }>> {
  return db('art_set_revisions as r')
    .where('r.art_set_id', artSetId)
    .select('r.*', db.raw('(select count(*) from art_set_entries e where e.revision_id = r.id)::int as entry_count'))
    .orderBy('r.revision', 'desc');
}

export async function findRevision(db: Knex, artSetId: string, revision?: number): Promise<ArtSetRevisionRow | undefined> {
  const q = db<ArtSetRevisionRow>('art_set_revisions').where({ art_set_id: artSetId });
  return revision ? q.andWhere({ revision }).first() : q.orderBy('revision', 'desc').first();
}

export async function findRevisionById(db: Knex, id: string): Promise<ArtSetRevisionRow | undefined> {
  return db<ArtSetRevisionRow>('art_set_revisions').where({ id }).first();
}

export async function findRevisionBySha(db: Knex, workspaceId: string, sha256: string): Promise<ArtSetRevisionRow | undefined> {
  return db<ArtSetRevisionRow>('art_set_revisions').where({ workspace_id: workspaceId, sha256 }).first();
}

export async function insertRevision(
  db: Knex,
  row: Pick<ArtSetRevisionRow, 'art_set_id' | 'workspace_id' | 'revision' | 'sha256' | 'note' | 'skipped' | 'created_by'> & { bytes: number },
): Promise<ArtSetRevisionRow> {
  const [inserted] = await db<ArtSetRevisionRow>('art_set_revisions')
    .insert({ ...row, skipped: JSON.stringify(row.skipped) as unknown as ArtSetRevisionRow['skipped'], bytes: String(row.bytes) })
    .returning('*');
  return inserted!;
}

export async function insertEntries(db: Knex, revisionId: string, entries: NewEntry[]): Promise<void> {
  if (entries.length === 0) return;
  await db.batchInsert(
    'art_set_entries',
    entries.map((e) => ({ ...e, revision_id: revisionId })),
    500,
  );
}

export async function listEntries(db: Knex, revisionId: string): Promise<ArtSetEntryRow[]> {
  return db<ArtSetEntryRow>('art_set_entries').where({ revision_id: revisionId }).orderBy('path');
}

export async function findEntry(db: Knex, revisionId: string, path: string): Promise<ArtSetEntryRow | undefined> {
  return db<ArtSetEntryRow>('art_set_entries').where({ revision_id: revisionId, path }).first();
}
