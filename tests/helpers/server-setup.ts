// Vitest global setup for the api and browser layers: start the built server (node .output/server/index.mjs)
// on a free port against the test database, wait until it answers, and stop it afterwards.
import { spawn, type ChildProcess } from 'node:child_process'
import { existsSync } from 'node:fs'
import { createServer } from 'node:net'
import path from 'node:path'
import type { TestProject } from 'vitest/node'
import { TEST_DATABASE_URL, TEST_SESSION_PASSWORD } from './env'

declare module 'vitest' {
  export interface ProvidedContext { baseURL: string }
}

const root = path.resolve(import.meta.dirname, '../..')

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer()
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port
      s.close(() => resolve(port))
    })
    s.on('error', reject)
  })
}

export interface RunningServer { url: string; port: number; child: ChildProcess; stop: () => Promise<void>; output: () => string }

/** Start one instance of the built app; tests of scale-out and faults start more. */
export async function startServer(env: Record<string, string> = {}, port?: number): Promise<RunningServer> {
  // ISTHMUS_BUILD_DIR: run tests against a copy of a build (e.g. while another build is in progress)
  const entry = path.join(process.env.ISTHMUS_BUILD_DIR ?? path.join(root, '.output'), 'server/index.mjs')
  if (!existsSync(entry)) throw new Error('No build found: run `npx nuxt build` (npm test does it) before the api and browser layers.')
  port ??= await freePort()
  let log = ''
  const child = spawn(process.execPath, [entry], {
    cwd: root,
    env: {
      ...process.env,
      HOST: '127.0.0.1',
      PORT: String(port),
      DATABASE_URL: TEST_DATABASE_URL,
      NUXT_SESSION_PASSWORD: TEST_SESSION_PASSWORD,
      NUXT_TRUST_PROXY: '1',
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  child.stdout!.on('data', (d) => (log += d))
  child.stderr!.on('data', (d) => (log += d))
  const url = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 30_000
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited early:\n${log}`)
    try {
      const r = await fetch(`${url}/api/health`)
      if (r.ok) break
    } catch { /* not up yet */ }
    if (Date.now() > deadline) throw new Error(`server did not answer in 30 s:\n${log}`)
    await new Promise((r) => setTimeout(r, 100))
  }
  const stop = () => new Promise<void>((resolve) => {
    if (child.exitCode !== null) return resolve()
    child.once('exit', () => resolve())
    child.kill('SIGTERM')
    setTimeout(() => child.kill('SIGKILL'), 5000).unref()
  })
  return { url, port, child, stop, output: () => log }
}

export default async function setup(project: TestProject) {
  const server = await startServer()
  project.provide('baseURL', server.url)
  return async () => {
    await server.stop()
  }
}
