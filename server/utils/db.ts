import type { Kysely, Transaction } from 'kysely'
import { createDb } from '../../db/connection'
import type { Database } from '../../db/types'

export type Db = Kysely<Database> | Transaction<Database>

let instance: Kysely<Database> | undefined

/** The one Kysely instance of this server process (pool size from DATABASE_POOL_MAX). */
export function useDb(): Kysely<Database> {
  instance ??= createDb()
  return instance
}

export async function closeDb(): Promise<void> {
  const d = instance
  instance = undefined
  await d?.destroy()
}
