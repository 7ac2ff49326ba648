/**
 * A code (of a theatre, a stock location) already used at the facility: a 409 that names the field and
 * says what to do, instead of a bare conflict. Returns quietly for any other error.
 */
export function codeTaken(e: unknown, code: string, what: string): void {
  if ((e as { code?: string })?.code === '23505') {
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `The code ${code} is already used by another ${what} here. Choose another code.`, data: { fields: { code: 'Already used here.' } } })
  }
}
