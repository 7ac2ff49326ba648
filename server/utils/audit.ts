import type { H3Event } from 'h3'
import type { Db } from './db'

export interface AuditEntry {
  actorId: number | null
  action: string
  entity: string
  entityId?: string | number | null
  details?: Record<string, unknown>
}

/** Append to the audit trail, in the caller's transaction when one is given. */
export async function writeAudit(db: Db, entry: AuditEntry, event?: H3Event): Promise<void> {
  await db
    .insertInto('audit_log')
    .values({
      actor_id: entry.actorId,
      action: entry.action,
      entity: entry.entity,
      entity_id: entry.entityId == null ? null : String(entry.entityId),
      details: JSON.stringify(entry.details ?? {}),
      ip: event ? clientIp(event) : null,
    })
    .execute()
}
