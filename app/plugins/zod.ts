// zod probes `new Function` once to decide whether to compile validators; our CSP forbids eval, so say
// up front that it should not try (same results, no CSP report).
import { z } from 'zod'

export default defineNuxtPlugin(() => {
  z.config({ jitless: true })
})
