import type { Knex } from 'knex';

export interface UserRow {
  id: string;
  email: string;
  name: string;
  password_hash: string;
  created_at: Date;
}

export type PublicUser = Pick<UserRow, 'id' | 'email' | 'name'>;

export function toPublicUser(row: UserRow): PublicUser {
  return { id: row.id, email: row.email, name: row.name };
}

export async function findUserByEmail(db: Knex, email: string): Promise<UserRow | undefined> {
  return db<UserRow>('users').whereRaw('lower(email) = lower(?)', [email]).first();
}

export async function findUserById(db: Knex, id: string): Promise<UserRow | undefined> {
  return db<UserRow>('users').where({ id }).first();
}

export async function insertUser(db: Knex, user: { email: string; name: string; passwordHash: string }): Promise<UserRow> {
  const [row] = await db<UserRow>('users')
    .insert({ email: user.email, name: user.name, password_hash: user.passwordHash })
    .returning('*');
  return row;
}

export async function setUserPassword(db: Knex, id: string, passwordHash: string, name?: string): Promise<void> {
  await db<UserRow>('users').where({ id }).update({ password_hash: passwordHash, ...(name ? { name } : {}) });
}
