// Who may call each API route. Written by hand from each route's own `requireRole(...)` line, so that
// tests/api/access-matrix.test.ts compares the running server with what we meant, not with itself.
// A new route file fails that test until it has a line here.
import { readdirSync, statSync } from 'node:fs'
import path from 'node:path'
import { ROLES, type Role } from '../../shared/utils/roles'

export interface RouteSpec {
  /** 'public': no session needed (and no role refused); otherwise the roles that pass the role check. */
  allow: 'public' | readonly Role[]
  /** Answers with a stream that never ends (server-sent events): check the status, then hang up. */
  stream?: true
  /** The call ends the session it is made with: use a session of its own. */
  endsSession?: true
}

const ALL = ROLES
const SIGNERS = ['surgeon'] as const
const CASE_WRITERS = ['circulator', 'surgeon'] as const
const RECALLS = ['coordinator', 'admin'] as const
const STOCK_KEEPERS = ['coordinator', 'admin'] as const
const ADMIN = ['admin'] as const

/** "METHOD /api/path/:param" → who may call it. */
export const ROUTE_MATRIX: Record<string, RouteSpec> = {
  'GET /api/health': { allow: 'public' },
  'POST /api/auth/login': { allow: 'public' },
  'POST /api/auth/logout': { allow: 'public', endsSession: true },
  'GET /api/auth/me': { allow: ALL },

  'GET /api/facility': { allow: ALL },
  'GET /api/tasks': { allow: ALL },

  'GET /api/catalog/items': { allow: ALL },
  'POST /api/catalog/items': { allow: STOCK_KEEPERS },
  'PATCH /api/catalog/items/:id': { allow: STOCK_KEEPERS },
  'PUT /api/catalog/items/:id': { allow: STOCK_KEEPERS },
  'POST /api/catalog/import': { allow: STOCK_KEEPERS },

  'GET /api/stock/shelf': { allow: ['circulator', 'surgeon', 'coordinator', 'admin'] },
  'GET /api/stock/lines': { allow: ['circulator', 'coordinator', 'admin'] },
  'GET /api/stock/locations': { allow: ['circulator', 'coordinator', 'admin'] },
  'POST /api/stock/locations': { allow: STOCK_KEEPERS },
  'PATCH /api/stock/locations/:id': { allow: STOCK_KEEPERS },
  'POST /api/stock/receive': { allow: ['circulator', 'coordinator', 'admin'] },
  'POST /api/stock/transfer': { allow: ['circulator', 'coordinator', 'admin'] },
  'POST /api/stock/adjust': { allow: STOCK_KEEPERS },
  'PUT /api/stock/par': { allow: STOCK_KEEPERS },
  'GET /api/stock/replenishment': { allow: STOCK_KEEPERS },
  'GET /api/stock/replenishment.csv': { allow: STOCK_KEEPERS },
  'POST /api/stock/replenished': { allow: STOCK_KEEPERS },

  'GET /api/reports/usage': { allow: ['circulator', 'surgeon', 'coordinator', 'admin'] },

  'GET /api/admin/users': { allow: ADMIN },
  'POST /api/admin/users': { allow: ADMIN },
  'PATCH /api/admin/users/:id': { allow: ADMIN },
  'POST /api/admin/users/:id/password': { allow: ADMIN },
  'GET /api/admin/theatres': { allow: ADMIN },
  'POST /api/admin/theatres': { allow: ADMIN },
  'PATCH /api/admin/theatres/:id': { allow: ADMIN },
  'GET /api/admin/settings': { allow: ADMIN },
  'PUT /api/admin/settings': { allow: ADMIN },
  'GET /api/admin/audit': { allow: ADMIN },
  'GET /api/admin/phi-access': { allow: ADMIN },

  'GET /api/cases': { allow: ALL },
  'POST /api/cases': { allow: ['circulator', 'surgeon', 'coordinator', 'admin'] },
  'GET /api/cases/:id': { allow: ALL },
  'GET /api/cases/:id/events': { allow: ALL, stream: true },
  'GET /api/cases/:id/sizing': { allow: ALL },
  'GET /api/cases/:id/review': { allow: ALL },
  'GET /api/cases/:id/record': { allow: ALL },
  'GET /api/cases/:id/record.pdf': { allow: ALL },
  'GET /api/cases/:id/card.pdf': { allow: ALL },
  'GET /api/cases/:id/fhir': { allow: ALL },
  'POST /api/cases/:id/readings': { allow: ['circulator', 'scrub', 'surgeon'] },
  'POST /api/cases/:id/decisions': { allow: CASE_WRITERS },
  'POST /api/cases/:id/close': { allow: CASE_WRITERS },
  'POST /api/cases/:id/reopen': { allow: CASE_WRITERS },
  'POST /api/cases/:id/sign': { allow: SIGNERS },
  'POST /api/cases/:id/addenda': { allow: SIGNERS },

  'GET /api/cases/:id/items': { allow: ALL },
  'POST /api/cases/:id/items': { allow: ['circulator', 'scrub', 'surgeon'] },
  'PATCH /api/cases/:id/items/:itemId': { allow: CASE_WRITERS },
  'POST /api/cases/:id/items/:itemId/acknowledge': { allow: ['circulator', 'scrub', 'surgeon'] },
  'POST /api/cases/:id/items/:itemId/match': { allow: ['circulator', 'coordinator'] },

  'GET /api/trace': { allow: ['surgeon', 'coordinator', 'admin'] },
  'GET /api/trace/export.csv': { allow: ['surgeon', 'coordinator', 'admin'] },

  'GET /api/recalls': { allow: RECALLS },
  'POST /api/recalls': { allow: RECALLS },
  'GET /api/recalls/:id': { allow: RECALLS },
  'GET /api/recalls/:id/export.csv': { allow: RECALLS },
  'GET /api/recalls/:id/fhir': { allow: RECALLS },
  'POST /api/recalls/:id/items': { allow: RECALLS },
  'POST /api/recalls/:id/import': { allow: RECALLS },
  'POST /api/recalls/:id/notify': { allow: RECALLS },
  'POST /api/recalls/:id/close': { allow: RECALLS },
  'PATCH /api/recalls/:id/patients/:rpId': { allow: RECALLS },
  'PATCH /api/recalls/:id/stock/:rsId': { allow: RECALLS },
}

export interface RouteFile {
  /** relative to the repository, e.g. server/api/cases/[id]/index.get.ts */
  file: string
  method: string
  /** /api/cases/:id */
  path: string
  /** "GET /api/cases/:id", the key into ROUTE_MATRIX */
  key: string
}

const root = path.resolve(import.meta.dirname, '../..')
const METHODS = ['get', 'post', 'put', 'patch', 'delete', 'head', 'options'] as const

/**
 * Every route file under server/api, named the way Nitro routes it: `[id]` → `:id`, `[...rest]` →
 * `:rest`, `index` → the folder itself, `(group)` folders left out, `name.METHOD.ts` → that method
 * (no method suffix: every method, listed as ANY).
 */
export function routeFiles(apiDir = path.join(root, 'server/api')): RouteFile[] {
  const out: RouteFile[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir).sort()) {
      const full = path.join(dir, name)
      if (statSync(full).isDirectory()) { walk(full); continue }
      if (!/\.(ts|js|mjs)$/.test(name) || name.endsWith('.d.ts')) continue
      const parts = path.relative(apiDir, full).split(path.sep)
      let last = parts.pop()!.replace(/\.(ts|js|mjs)$/, '')
      let method = 'ANY'
      const m = last.match(/\.([a-z]+)$/)
      if (m && (METHODS as readonly string[]).includes(m[1]!)) {
        method = m[1]!.toUpperCase()
        last = last.slice(0, -m[0].length)
      }
      const segments = [...parts, last]
        .filter((s) => !/^\(.*\)$/.test(s))
        .map((s) => s.replace(/^\[\.\.\.(\w+)\]$/, ':$1').replace(/\[(\w+)\]/g, ':$1'))
      if (segments.at(-1) === 'index') segments.pop()
      const route = ['/api', ...segments].join('/')
      out.push({ file: path.relative(root, full), method, path: route, key: `${method} ${route}` })
    }
  }
  walk(apiDir)
  return out
}
