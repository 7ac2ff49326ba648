import { sql, type Kysely } from 'kysely'

// A lot search shows the newest implants first, 50 at a time. With the time and id after the lot in
// its index, PostgreSQL reads a lot's rows already in that order and stops after the page, instead of
// joining and sorting every row of a heavily used lot. The lot stays the leading column with
// text_pattern_ops, so prefix searches (LIKE 'ABC%') keep using it.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    DROP INDEX case_items_lot_idx;
    CREATE INDEX case_items_lot_idx ON case_items (lot text_pattern_ops, recorded_at, id);
  `.execute(db)
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`
    DROP INDEX case_items_lot_idx;
    CREATE INDEX case_items_lot_idx ON case_items (lot text_pattern_ops);
  `.execute(db)
}
