import { sql, type Kysely } from 'kysely'

// Admin screens: creating a person is idempotent by a device-made key like every other create; a rule
// profile version, once saved, is what earlier cases were sized under, so it may never change; the audit
// viewer filters by action (prefix match, newest first).
export async function up(db: Kysely<any>): Promise<void> {
  await sql`
    ALTER TABLE users ADD COLUMN client_key uuid UNIQUE;
    CREATE TRIGGER rule_profiles_append_only BEFORE UPDATE OR DELETE ON rule_profiles
      FOR EACH ROW EXECUTE FUNCTION isthmus_append_only();
    CREATE INDEX audit_log_action_idx ON audit_log (action text_pattern_ops, at);
  `.execute(db)
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`
    DROP INDEX audit_log_action_idx;
    DROP TRIGGER rule_profiles_append_only ON rule_profiles;
    ALTER TABLE users DROP COLUMN client_key;
  `.execute(db)
}
