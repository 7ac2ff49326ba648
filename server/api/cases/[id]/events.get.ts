/**
 * GET /api/cases/:id/events — server-sent events for one case: a message whenever an item, reading or
 * decision changes, on any app instance (PostgreSQL LISTEN/NOTIFY). `resync` asks the page to reload
 * after the server lost its database connection for a moment.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { loadCase } from '../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  await loadCase(useDb(), id, user)
  await ensureListening()
  const stream = createEventStream(event)
  const off = onLive(
    (e) => { if (e.caseId === id) void stream.push({ event: e.kind, data: JSON.stringify(e) }) },
    () => { void stream.push({ event: 'resync', data: '{}' }) },
  )
  // a comment every 20 s keeps proxies from closing an idle stream
  const ping = setInterval(() => { void stream.push({ event: 'ping', data: String(Date.now()) }) }, 20_000)
  stream.onClosed(async () => {
    clearInterval(ping)
    off()
    await stream.close()
  })
  void stream.push({ event: 'ready', data: JSON.stringify({ caseId: id }) })
  return stream.send()
})
