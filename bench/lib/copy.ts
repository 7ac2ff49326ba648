// Bulk load through psql's \copy … FROM pstdin: the generator writes COPY text rows into psql's standard
// input, so there are no temp files and PostgreSQL parses while Node generates (two cores, both busy).
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process'
import { once } from 'node:events'
import { connArgs, pgBin } from './env'

export const NULL = '\\N'

/** COPY text format: backslash, tab, newline and carriage return are the only special characters. */
export function esc(s: string): string {
  return /[\\\t\n\r]/.test(s) ? s.replace(/[\\\t\n\r]/g, (c) => (c === '\\' ? '\\\\' : c === '\t' ? '\\t' : c === '\n' ? '\\n' : '\\r')) : s
}

export class CopyStream {
  rows = 0
  private child: ChildProcessWithoutNullStreams
  private parts: string[] = []
  private size = 0
  private stderr = ''
  private done: Promise<void>
  private failed: Error | null = null

  constructor(db: string, readonly table: string, columns: string[]) {
    // replica role: FK and row triggers stay off during the load (the generator writes consistent rows;
    // the signed-case triggers would otherwise look up the case for each of millions of rows)
    const args = [...connArgs(db), '-X', '-q', '-v', 'ON_ERROR_STOP=1',
      '-c', 'SET session_replication_role = replica',
      '-c', `\\copy ${table} (${columns.join(', ')}) FROM pstdin`]
    this.child = spawn(pgBin('psql'), args, { stdio: ['pipe', 'pipe', 'pipe'] })
    this.child.stderr.on('data', (d) => (this.stderr += d))
    this.child.stdout.resume()
    this.child.stdin.on('error', () => { /* reported by the exit code below */ })
    this.done = new Promise((resolve, reject) => {
      this.child.on('error', reject)
      this.child.on('close', (code) => {
        if (code === 0) return resolve()
        this.failed = new Error(`COPY into ${table} failed (psql exit ${code}): ${this.stderr.trim()}`)
        reject(this.failed)
      })
    })
    this.done.catch(() => {}) // surfaced by flush()/end()
  }

  /** One row; fields already in COPY text form (esc() for free text, NULL for null). */
  row(line: string) {
    this.parts.push(line)
    this.size += line.length
    this.rows++
  }

  get pending() {
    return this.size
  }

  async flush(): Promise<void> {
    if (this.failed) throw this.failed
    if (!this.parts.length) return
    const chunk = this.parts.join('\n') + '\n'
    this.parts = []
    this.size = 0
    if (!this.child.stdin.write(chunk)) {
      await Promise.race([once(this.child.stdin, 'drain'), this.done.then(() => { throw new Error(`psql for ${this.table} ended early`) })])
    }
  }

  async end(): Promise<number> {
    await this.flush()
    this.child.stdin.end()
    await this.done
    return this.rows
  }
}
