// A small HTTP client with its own cookie jar: one instance is one person's device.
export interface Reply<T = any> { status: number; body: T; headers: Headers }

// The CSRF double-submit (server/middleware/csrf.ts): a page gets the cookie with its first answer and
// echoes it in a header on every write. An API client has no page, so it GETs /api/health first.
export const CSRF_COOKIE = 'isthmus-csrf'
export const CSRF_HEADER = 'x-csrf-token'
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

export interface ClientOptions {
  /** false: never fetch or send the CSRF token (to test that the server refuses such writes). */
  csrf?: boolean
}

export class Client {
  private cookies = new Map<string, string>()
  constructor(readonly baseURL: string, readonly headers: Record<string, string> = {}, readonly options: ClientOptions = {}) {}

  cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ')
  }
  setCookie(name: string, value: string) {
    this.cookies.set(name, value)
  }
  getCookie(name: string) {
    return this.cookies.get(name)
  }

  /** The CSRF token this device would echo; fetched with a GET when it has none yet. */
  async csrfToken(): Promise<string> {
    if (!this.cookies.get(CSRF_COOKIE)) await this.get('/api/health')
    const token = this.cookies.get(CSRF_COOKIE)
    if (!token) throw new Error('GET /api/health did not set the isthmus-csrf cookie')
    return token
  }

  async request<T = any>(method: string, url: string, body?: unknown, extra: Record<string, string> = {}): Promise<Reply<T>> {
    const csrf: Record<string, string> = {}
    if (this.options.csrf !== false && !SAFE.has(method.toUpperCase())) csrf[CSRF_HEADER] = await this.csrfToken()
    // extra comes last, so a test can still send a wrong token on purpose
    const headers: Record<string, string> = { accept: 'application/json', ...csrf, ...this.headers, ...extra }
    if (this.cookies.size) headers.cookie = this.cookieHeader()
    let payload: BodyInit | undefined
    if (body !== undefined) {
      if (typeof body === 'string' || body instanceof Uint8Array) payload = body as BodyInit
      else { payload = JSON.stringify(body); headers['content-type'] ??= 'application/json' }
    }
    const r = await fetch(this.baseURL + url, { method, headers, body: payload, redirect: 'manual' })
    for (const c of r.headers.getSetCookie()) {
      const [pair] = c.split(';')
      const i = pair!.indexOf('=')
      const name = pair!.slice(0, i)
      const value = pair!.slice(i + 1)
      if (!value || /expires=Thu, 01 Jan 1970/i.test(c) || /max-age=0/i.test(c)) this.cookies.delete(name)
      else this.cookies.set(name, value)
    }
    const text = await r.text()
    let parsed: any = text
    try { parsed = text ? JSON.parse(text) : null } catch { /* not JSON */ }
    return { status: r.status, body: parsed, headers: r.headers }
  }
  get<T = any>(url: string, extra?: Record<string, string>) { return this.request<T>('GET', url, undefined, extra) }
  post<T = any>(url: string, body?: unknown, extra?: Record<string, string>) { return this.request<T>('POST', url, body ?? {}, extra) }
  patch<T = any>(url: string, body?: unknown, extra?: Record<string, string>) { return this.request<T>('PATCH', url, body ?? {}, extra) }
  put<T = any>(url: string, body?: unknown, extra?: Record<string, string>) { return this.request<T>('PUT', url, body ?? {}, extra) }
  delete<T = any>(url: string, extra?: Record<string, string>) { return this.request<T>('DELETE', url, undefined, extra) }

  async login(email: string, password: string): Promise<Reply> {
    const r = await this.post('/api/auth/login', { email, password })
    if (r.status !== 200) throw new Error(`sign-in as ${email} failed: ${r.status} ${JSON.stringify(r.body)}`)
    return r
  }
}

/** A client that appears to come from its own address (the test server trusts X-Forwarded-For). */
export function clientFrom(baseURL: string): Client {
  // The IPv6 documentation prefix (RFC 3849): only ever a header value, never a destination.
  const hex = () => ((Math.random() * 0xffff) | 0).toString(16)
  const ip = `2001:db8:${hex()}:${hex()}::${hex()}`
  return new Client(baseURL, { 'x-forwarded-for': ip })
}

type Role = 'circulator' | 'scrub' | 'surgeon' | 'coordinator' | 'admin'
const EVERY_ROLE: readonly Role[] = ['circulator', 'scrub', 'surgeon', 'coordinator', 'admin']

/** One signed-in client per role of a test facility, each from its own address. */
export async function signInRoles<R extends Role = Role>(baseURL: string, f: { users: Record<Role, { email: string }> }, password: string,
  roles: readonly R[] = EVERY_ROLE as readonly R[]): Promise<Record<R, Client>> {
  const out = {} as Record<R, Client>
  for (const role of roles) {
    out[role] = clientFrom(baseURL)
    await out[role].login(f.users[role].email, password)
  }
  return out
}
