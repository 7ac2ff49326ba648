// Standalone migrator: run before the server starts (Nitro does not await async plugins, and the built
// server carries no migration files). Usage: tsx db/migrate.ts [--down]
import { Migrator } from 'kysely'
import { createDb } from './connection'
import { FolderMigrationProvider } from './migration-provider'

async function main() {
  const db = createDb()
  const migrator = new Migrator({
    db,
    provider: new FolderMigrationProvider(),
    // branches merged in any order each bring their own migrations; each runs once, independent of the others
    allowUnorderedMigrations: true,
  })
  const { error, results } = process.argv.includes('--down')
    ? await migrator.migrateDown()
    : await migrator.migrateToLatest()
  for (const r of results ?? []) {
    console.log(`[migrate] ${r.status === 'Success' ? 'applied' : r.status.toLowerCase()}: ${r.migrationName}`)
  }
  await db.destroy()
  if (error) {
    console.error('[migrate] failed:', error)
    process.exit(1)
  }
  if (!results?.length) console.log('[migrate] up to date')
}

main()
