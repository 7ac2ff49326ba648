import type { z } from 'zod'

// vee-validate 4.15 does not understand a raw zod 4 schema (it would call every input valid), so forms
// wrap the shared schema in this small typed-schema adapter.
export function formSchema<S extends z.ZodType>(schema: S) {
  return {
    __type: 'VVTypedSchema' as const,
    async parse(values: unknown) {
      const r = await schema.safeParseAsync(values)
      if (r.success) return { value: r.data as z.output<S>, errors: [] as { path: string; errors: string[] }[] }
      const byPath = new Map<string, string[]>()
      for (const issue of r.error.issues) {
        const path = issue.path.map(String).join('.')
        byPath.set(path, [...(byPath.get(path) ?? []), issue.message])
      }
      return { value: undefined, errors: [...byPath].map(([path, errors]) => ({ path, errors })) }
    },
    cast(values: unknown) { return values },
  }
}

/** The server's field messages (a 400 from readBodyWith), recognised by shape, not by class. */
export function serverFieldErrors(err: unknown): Record<string, string> | null {
  const data = (err as { data?: { data?: { fields?: unknown } } })?.data?.data
  const fields = data?.fields
  return fields && typeof fields === 'object' ? (fields as Record<string, string>) : null
}

/** One plain sentence for any failed request. */
export function errorMessage(err: unknown, fallback = 'Something went wrong. Try again.'): string {
  const e = err as { data?: { message?: string }; statusCode?: number; message?: string }
  if (e?.data?.message) return e.data.message
  if (e?.statusCode === undefined && typeof navigator !== 'undefined' && !navigator.onLine) {
    return 'No connection. Check the Wi-Fi and try again.'
  }
  return fallback
}
