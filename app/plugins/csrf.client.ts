// Every same-origin write through $fetch (and so useFetch, and nuxt-auth-utils' sign-out) carries the
// CSRF token the server checks (server/middleware/csrf.ts). $fetch is wrapped rather than re-created
// with an onRequest default: ofetch lets a call's own onRequest replace the default one, which would
// drop the header silently. Client only: SSR makes GETs alone, and those need no token.
import type { $Fetch, FetchOptions, FetchRequest } from 'ofetch'

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

function urlOf(request: FetchRequest): string {
  return typeof request === 'string' ? request : request instanceof Request ? request.url : String(request)
}

/** Never hand the token to another origin. */
function sameOrigin(request: FetchRequest, baseURL?: string): boolean {
  try {
    return new URL(urlOf(request), new URL(baseURL ?? '/', location.href)).origin === location.origin
  } catch {
    return false
  }
}

export default defineNuxtPlugin({
  name: 'isthmus-csrf',
  enforce: 'pre',
  setup() {
    const base = globalThis.$fetch as unknown as $Fetch
    const health = `${useRuntimeConfig().app.baseURL.replace(/\/$/, '')}/api/health`
    let fetching: Promise<unknown> | undefined

    // The SSR answer that loaded the page set the cookie; if it is missing (cleared by the person, or a
    // tab restored after the browser dropped its session cookies), one GET brings a new one first.
    async function token(): Promise<string | undefined> {
      if (!csrfToken()) {
        fetching ??= base.native(health, { credentials: 'same-origin' }).catch(() => undefined).finally(() => { fetching = undefined })
        await fetching
      }
      return csrfToken()
    }

    async function withToken<O extends FetchOptions<any>>(request: FetchRequest, options?: O): Promise<O | undefined> {
      const method = String(options?.method ?? (request instanceof Request ? request.method : 'GET')).toUpperCase()
      if (SAFE.has(method) || !sameOrigin(request, options?.baseURL)) return options
      const t = await token()
      if (!t) return options // the server answers 403 with a message that says to reload
      const headers = new Headers((options?.headers ?? (request instanceof Request ? request.headers : undefined)) as HeadersInit | undefined)
      headers.set(CSRF_HEADER_NAME, t)
      return { ...options, headers } as O
    }

    function wrap(inner: $Fetch): $Fetch {
      const f = ((request: FetchRequest, options?: FetchOptions<any>) =>
        withToken(request, options).then((o) => inner(request, o))) as $Fetch
      f.raw = ((request: FetchRequest, options?: FetchOptions<any>) =>
        withToken(request, options).then((o) => inner.raw(request, o))) as $Fetch['raw']
      f.native = inner.native
      f.create = ((...args: Parameters<$Fetch['create']>) => wrap(inner.create(...args))) as $Fetch['create']
      return f
    }

    globalThis.$fetch = wrap(base) as unknown as typeof globalThis.$fetch
  },
})
