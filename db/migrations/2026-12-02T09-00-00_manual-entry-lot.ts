import { sql, type Kysely } from 'kysely'

// A pack entered by hand has no barcode to go back to, so the lot and the expiry read off its label are
// what a recall will search for: both are required, not the lot or the serial.
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    DO $$
    DECLARE c text;
    BEGIN
      SELECT conname INTO c FROM pg_constraint
       WHERE conrelid = 'case_items'::regclass AND contype = 'c'
         AND pg_get_constraintdef(oid) LIKE '%''manual''::text%' AND pg_get_constraintdef(oid) LIKE '%serial%';
      IF c IS NOT NULL THEN EXECUTE format('ALTER TABLE case_items DROP CONSTRAINT %I', c); END IF;
    END $$;
    ALTER TABLE case_items ADD CONSTRAINT case_items_manual_lot_expiry
      CHECK (source <> 'manual' OR (lot IS NOT NULL AND expiry IS NOT NULL));
  `.execute(db)
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`
    ALTER TABLE case_items DROP CONSTRAINT case_items_manual_lot_expiry;
    ALTER TABLE case_items ADD CHECK (source <> 'manual' OR (lot IS NOT NULL OR serial IS NOT NULL));
  `.execute(db)
}
