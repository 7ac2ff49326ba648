import { promises as fs } from 'node:fs'
import path from 'node:path'
import { pathToFileURL } from 'node:url'
import type { Migration, MigrationProvider } from 'kysely'

/**
 * Migrations from db/migrations, imported by our own code (not from inside node_modules) so that the
 * same files load under tsx and under vitest's transformer.
 */
export class FolderMigrationProvider implements MigrationProvider {
  constructor(private folder = path.join(import.meta.dirname, 'migrations')) {}
  async getMigrations(): Promise<Record<string, Migration>> {
    const out: Record<string, Migration> = {}
    for (const file of (await fs.readdir(this.folder)).sort()) {
      if (!/\.(ts|js|mjs)$/.test(file) || file.endsWith('.d.ts')) continue
      const mod = await import(pathToFileURL(path.join(this.folder, file)).href)
      out[file.replace(/\.(ts|js|mjs)$/, '')] = mod
    }
    return out
  }
}
