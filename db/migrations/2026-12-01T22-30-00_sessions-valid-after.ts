import { sql, type Kysely } from 'kysely'

// Sessions are sealed cookies the server does not store, so ending them early needs a line in time:
// a session made before it (a password reset, for one) is no longer accepted.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE users ADD COLUMN sessions_valid_after timestamptz`.execute(db)
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`ALTER TABLE users DROP COLUMN sessions_valid_after`.execute(db)
}
