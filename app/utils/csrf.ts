// The page's half of the CSRF check (server/middleware/csrf.ts): the server sets a cookie that only
// scripts on this origin can read, and every write repeats it in a header. $fetch and useFetch get it
// from app/plugins/csrf.client.ts; a plain fetch() spreads csrfHeaders() into its headers.

export const CSRF_COOKIE_NAME = 'isthmus-csrf'
export const CSRF_HEADER_NAME = 'x-csrf-token'

/** The token from the cookie, or undefined (on the server, or before the first answer set it). */
export function csrfToken(): string | undefined {
  if (typeof document === 'undefined') return undefined
  for (const part of document.cookie.split(';')) {
    const i = part.indexOf('=')
    if (i > 0 && part.slice(0, i).trim() === CSRF_COOKIE_NAME) return decodeURIComponent(part.slice(i + 1).trim())
  }
  return undefined
}

/** `{ 'x-csrf-token': … }` for a same-origin write by fetch(); empty when there is no token yet. */
export function csrfHeaders(): Record<string, string> {
  const token = csrfToken()
  return token ? { [CSRF_HEADER_NAME]: token } : {}
}
