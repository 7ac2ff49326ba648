import type { H3Event } from 'h3'
import type { z } from 'zod'

/** Field path → first message, for forms to show beside each field. */
export function fieldErrors(issues: readonly z.core.$ZodIssue[]): Record<string, string> {
  const out: Record<string, string> = {}
  for (const i of issues) {
    const key = i.path.map(String).join('.') || '_'
    out[key] ??= i.message
  }
  return out
}

function badRequest(issues: readonly z.core.$ZodIssue[]): never {
  const fields = fieldErrors(issues)
  throw createError({
    statusCode: 400,
    statusMessage: 'Validation Error',
    message: `Check ${Object.keys(fields).length === 1 ? 'this field' : 'these fields'}: ${Object.entries(fields).map(([k, m]) => `${k} — ${m}`).join('; ')}`,
    data: { fields, issues: issues.map((i) => ({ path: i.path.map(String), message: i.message, code: i.code })) },
  })
}

/** Read and validate a JSON body with a shared zod schema; a bad body is a 400 that names each field. */
export async function readBodyWith<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  let raw: unknown
  try {
    raw = await readBody(event)
  } catch {
    throw createError({ statusCode: 400, statusMessage: 'Bad Request', message: 'The request body is not valid JSON.' })
  }
  rejectNul(raw)
  const r = await schema.safeParseAsync(raw ?? {})
  if (!r.success) badRequest(r.error.issues)
  return r.data
}

/** The path of the first string holding a NUL character, or null. */
function nulPath(v: unknown, path: string[] = []): string[] | null {
  if (typeof v === 'string') return v.includes('\u0000') ? path : null
  if (Array.isArray(v)) {
    for (let i = 0; i < v.length; i++) { const p = nulPath(v[i], [...path, String(i)]); if (p) return p }
  } else if (v && typeof v === 'object') {
    for (const [k, x] of Object.entries(v)) { const p = nulPath(x, [...path, k]); if (p) return p }
  }
  return null
}

// PostgreSQL text cannot hold NUL, and no scanner or keyboard sends one: refuse it up front
// instead of letting the insert fail as a 500.
function rejectNul(raw: unknown): void {
  const p = nulPath(raw)
  if (!p) return
  const key = p.join('.') || '_'
  throw createError({
    statusCode: 400,
    statusMessage: 'Validation Error',
    message: `Check this field: ${key} — it holds a NUL character (\\0); re-scan or retype it.`,
    data: { fields: { [key]: 'Holds a NUL character; re-scan or retype it.' } },
  })
}

export async function queryWith<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  const query = getQuery(event)
  rejectNul(query)
  const r = await schema.safeParseAsync(query)
  if (!r.success) badRequest(r.error.issues)
  return r.data
}

export async function paramsWith<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  const r = await schema.safeParseAsync(getRouterParams(event))
  if (!r.success) {
    throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such record.' })
  }
  return r.data
}

let trustProxy: boolean | undefined
/**
 * Whether the server sits behind our own proxy (NUXT_TRUST_PROXY). Read once: useRuntimeConfig(event)
 * copies the whole config and re-reads the environment on its first call in every request.
 */
export function trustsProxy(): boolean {
  // env overrides arrive as boolean, number or string depending on how they were written
  trustProxy ??= ['true', '1'].includes(String(useRuntimeConfig().trustProxy))
  return trustProxy
}

/** The caller's address; X-Forwarded-For only when the server is told it sits behind a proxy. */
export function clientIp(event: H3Event): string {
  if (trustsProxy()) {
    const fwd = getRequestHeader(event, 'x-forwarded-for')
    if (fwd) return fwd.split(',')[0]!.trim()
  }
  return getRequestIP(event) ?? 'unknown'
}

/**
 * Map database errors people can cause (duplicate, broken reference) to 409s; rethrow the rest.
 * `code`: the value of a code that must be unique at the facility (a theatre's, a location's), so a
 * duplicate names the form's `code` field and says what to do.
 */
export function mapDbError(e: unknown, what = 'record', opts: { code?: string } = {}): never {
  const code = (e as { code?: string })?.code
  if (code === '23505' && opts.code !== undefined) {
    throw createError({
      statusCode: 409, statusMessage: 'Conflict',
      message: `The code ${opts.code} is already used by another ${what} here. Choose another code.`, data: { fields: { code: 'Already used here.' } },
    })
  }
  if (code === '23505') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `This ${what} already exists.` })
  if (code === '23503') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `This ${what} refers to something that does not exist.` })
  if (code === '23514') throw createError({ statusCode: 400, statusMessage: 'Bad Request', message: `This ${what} breaks a rule of the record.` })
  if (code === '22021' || code === '22P05') throw createError({ statusCode: 400, statusMessage: 'Bad Request', message: `This ${what} holds characters the record cannot store; retype it.` })
  if (code === '23001' || code === 'P0001') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `This ${what} is locked and cannot be changed.` })
  throw e
}
