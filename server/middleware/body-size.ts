// nuxt-security's size limit (nuxt.config.ts) measures POST, PUT and DELETE only; PATCH bodies get
// the same 1 MB cap here, before any route reads them.
const PATCH_LIMIT = 1_000_000

export default defineEventHandler((event) => {
  if (event.method !== 'PATCH') return
  const length = getRequestHeader(event, 'content-length')
  if (length === undefined) {
    // without a length we could only find out by reading it all; our pages always send one
    if (getRequestHeader(event, 'transfer-encoding')) {
      throw createError({ statusCode: 411, statusMessage: 'Length Required', message: 'Send this change with its length (Content-Length).' })
    }
    return
  }
  if (!/^\d+$/.test(length) || Number(length) > PATCH_LIMIT) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: 'This change is too large to send (the limit is 1 MB).' })
  }
})
