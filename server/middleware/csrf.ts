import { randomBytes, timingSafeEqual } from 'node:crypto'
import { trustsProxy } from '../utils/http'
import type { H3Event } from 'h3'

// Cross-site request forgery: the session is a cookie, so the browser would attach it to a form or
// fetch that another site makes. Every write must therefore echo a token that only our own pages can
// read (double-submit: a cookie scripts on this origin can read, repeated in a header), and, when the
// browser says where the request comes from (Origin), that must be this host.
// The client side is app/plugins/csrf.client.ts ($fetch) and app/utils/csrf.ts (plain fetch).

const CSRF_COOKIE = 'isthmus-csrf'
const CSRF_HEADER = 'x-csrf-token'
const TOKEN = /^[A-Za-z0-9_-]{43}$/ // 32 random bytes, base64url
// Anything that is not a read needs the token, whatever its path: no spelling of a URL slips past.
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

const NO_TOKEN = 'This request came without its security token. Reload the page and try again.'
const FOREIGN = 'This request came from another site and was refused. Open Isthmus directly and try again.'

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a)
  const y = Buffer.from(b)
  // timingSafeEqual needs equal lengths; the length of a token is no secret
  return x.length === y.length && timingSafeEqual(x, y)
}

/** The host the browser talked to: behind our own proxy (NUXT_TRUST_PROXY=1) the one it forwarded. */
function requestHost(event: H3Event): string {
  if (trustsProxy()) {
    const fwd = getRequestHeader(event, 'x-forwarded-host')?.split(',')[0]?.trim()
    if (fwd) return fwd
  }
  return getRequestHeader(event, 'host') ?? ''
}

function sameHost(origin: string, host: string): boolean {
  try {
    const o = new URL(origin) // "null" (sandboxed frames, some redirects) throws: refused
    // read the host with the origin's scheme, so "example.org:443" and "https://example.org" agree
    return !!host && o.host === new URL(`${o.protocol}//${host}`).host
  } catch {
    return false
  }
}

function refuse(message: string): never {
  throw createError({ statusCode: 403, statusMessage: 'Forbidden', message })
}

export default defineEventHandler((event) => {
  if (event.path.startsWith('/_nuxt/') || event.path.startsWith('/__nuxt')) return

  let token = getCookie(event, CSRF_COOKIE)
  if (!token || !TOKEN.test(token)) {
    // Set on the first answer (the sign-in page, or GET /api/health for API clients). Not HttpOnly:
    // our scripts must read it to echo it; other sites cannot read it, and that is the whole point.
    setCookie(event, CSRF_COOKIE, randomBytes(32).toString('base64url'), { path: '/', sameSite: 'lax', secure: true, httpOnly: false })
    token = undefined // a request that brought no (valid) cookie cannot prove anything yet
  }

  if (SAFE.has(event.method)) return

  const origin = getRequestHeader(event, 'origin')
  if (origin !== undefined && !sameHost(origin, requestHost(event))) refuse(FOREIGN)

  const sent = getRequestHeader(event, CSRF_HEADER)
  if (!token || !sent || !sameToken(sent, token)) refuse(NO_TOKEN)
})
