// The e-mail outbox against real PostgreSQL and a real local SMTP server: delivery with attachments,
// outages (connection refused, 451), backoff, giving up, crashed senders, and concurrent senders.
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, onTestFinished } from 'vitest'
import { sql, type Kysely } from 'kysely'
import nodemailer, { type Transporter } from 'nodemailer'
import { PDFDocument, StandardFonts } from 'pdf-lib'
import type { Database } from '../../db/types'
import { deliverDue, enqueueMail, startOutboxWorker, transportFromEnv } from '../../server/utils/mail'
import { freshDatabase, tag } from '../helpers/db'
import { startSmtp, toAddresses, type CapturedSmtp } from '../helpers/smtp'

let fresh: Awaited<ReturnType<typeof freshDatabase>>
let db: Kysely<Database>
// A database of its own: deliverDue sends everything due, which must not include other files' rows.
beforeAll(async () => {
  fresh = await freshDatabase(`isthmus_outbox_${process.pid}_${tag()}`)
  db = fresh.db
})
afterAll(async () => { await fresh?.drop() })

const servers: CapturedSmtp[] = []
const transports: Transporter[] = []
beforeEach(async () => { await db.deleteFrom('outbox').execute() })
afterEach(async () => {
  for (const t of transports.splice(0)) t.close()
  await Promise.all(servers.splice(0).map((s) => s.stop()))
})

async function smtp(opts: Parameters<typeof startSmtp>[0] = {}) {
  const s = await startSmtp(opts)
  servers.push(s)
  return s
}
function transportTo(port: number): Transporter {
  const t = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true, connectionTimeout: 5000 })
  transports.push(t)
  return t
}
/** A port nothing listens on: a server started and stopped (connection refused). */
async function deadPort(): Promise<number> {
  const s = await startSmtp()
  await s.stop()
  return s.port
}
async function rows() {
  return db.selectFrom('outbox').selectAll().orderBy('id').execute()
}
const plus = (d: Date, ms: number) => new Date(d.getTime() + ms)

async function samplePdf(text: string): Promise<Uint8Array> {
  const doc = await PDFDocument.create()
  const page = doc.addPage([300, 200])
  page.drawText(text, { x: 20, y: 100, size: 12, font: await doc.embedFont(StandardFonts.Helvetica) })
  return doc.save()
}

describe('enqueueMail', () => {
  it('queues in the caller\'s transaction: a rolled-back write queues nothing', async () => {
    const t = tag()
    await db.transaction().execute(async (trx) => {
      await enqueueMail(trx, { to: `kept-${t}@example.test`, subject: 'kept', text: 'x', kind: 'signing_request' })
    })
    await expect(db.transaction().execute(async (trx) => {
      await enqueueMail(trx, { to: `lost-${t}@example.test`, subject: 'lost', text: 'x', kind: 'signing_request' })
      throw new Error('the write failed')
    })).rejects.toThrow('the write failed')
    expect((await rows()).map((r) => r.subject)).toEqual(['kept'])
  })

  it('makes one row for the same dedupeKey twice, and returns its id both times', async () => {
    const key = `recall:${tag()}:user:7`
    const m = { to: `coordinator-${tag()}@example.test`, subject: 'Recall notice', text: 'A recall matches an implant.', kind: 'recall_notice', ref: 'recall:1', dedupeKey: key }
    const a = await enqueueMail(db, m)
    const b = await db.transaction().execute((trx) => enqueueMail(trx, { ...m, subject: 'Recall notice (again)' }))
    expect(a).toBeTypeOf('number')
    expect(b).toBe(a)
    const all = await rows()
    expect(all).toHaveLength(1)
    expect(all[0]).toMatchObject({ id: a, subject: 'Recall notice', kind: 'recall_notice', ref: 'recall:1', dedupe_key: key, status: 'pending', attempts: 0 })
    // without a key, two calls are two messages
    await enqueueMail(db, { ...m, dedupeKey: undefined })
    await enqueueMail(db, { ...m, dedupeKey: undefined })
    expect(await rows()).toHaveLength(3)

    const server = await smtp()
    expect(await deliverDue(db, transportTo(server.port))).toMatchObject({ sent: 3 })
    expect((await server.waitFor(3)).filter((x) => x.subject === 'Recall notice')).toHaveLength(3)
  })
})

describe('deliverDue', () => {
  it('delivers a queued message with its PDF attachment, byte for byte', async () => {
    process.env.MAIL_FROM = 'Isthmus records <records@demo.isthmus.test>'
    onTestFinished(() => { delete process.env.MAIL_FROM })
    const server = await smtp()
    const pdf = await samplePdf(`Signed record ${tag()}`)
    const to = `records-${tag()}@demo.isthmus.test`
    const id = await db.transaction().execute((trx) => enqueueMail(trx, {
      to,
      subject: 'Signed record: case 12',
      text: 'The signed implant record is attached.',
      html: '<p>The signed implant record is attached.</p>',
      attachments: [
        { filename: 'record-case-12.pdf', contentType: 'application/pdf', content: pdf },
        // a small Buffer is a view into a shared pool (byteOffset ≠ 0): only its own bytes may go out
        { filename: 'lots.txt', contentType: 'text/plain', content: Buffer.from('lot 12345\n') },
      ],
      kind: 'signed_record',
      ref: 'case:12',
    }))

    const result = await deliverDue(db, transportTo(server.port))
    expect(result).toEqual({ sent: 1, failed: 0, retried: 0, recovered: 0 })
    const [m] = await server.waitFor(1)
    expect(server.messages).toHaveLength(1)
    expect(toAddresses(m!)).toEqual([to])
    expect(server.envelopes[0]!.to).toEqual([to])
    expect(m!.from?.value).toEqual([{ name: 'Isthmus records', address: 'records@demo.isthmus.test' }])
    expect(m!.subject).toBe('Signed record: case 12')
    expect(m!.text?.trim()).toBe('The signed implant record is attached.')
    expect(m!.html).toContain('<p>The signed implant record is attached.</p>')
    expect(m!.attachments).toHaveLength(2)
    expect(m!.attachments[1]!.content.toString('utf8')).toBe('lot 12345\n')
    const att = m!.attachments[0]!
    expect(att.filename).toBe('record-case-12.pdf')
    expect(att.contentType).toBe('application/pdf')
    expect(att.content.length).toBe(pdf.length)
    expect(Buffer.compare(att.content, Buffer.from(pdf))).toBe(0)

    const [row] = await rows()
    expect(row).toMatchObject({ id, status: 'sent', attempts: 1, last_error: null, message_id: m!.messageId })
    expect(row!.sent_at).toBeInstanceOf(Date)
    // nothing is sent twice
    expect(await deliverDue(db, transportTo(server.port))).toMatchObject({ sent: 0, retried: 0 })
    expect(server.messages).toHaveLength(1)
  })

  it('keeps mail queued while the server is down, backs off, and sends each once when it is back', async () => {
    const port = await deadPort()
    const t = tag()
    for (const n of [1, 2, 3]) {
      await enqueueMail(db, { to: `surgeon-${n}-${t}@example.test`, subject: `Please sign case ${n} (${t})`, text: 'Ready to sign.', kind: 'signing_request', ref: `case:${n}` })
    }
    const t0 = new Date(Date.now() + 1000)

    expect(await deliverDue(db, transportTo(port), { now: t0 })).toEqual({ sent: 0, failed: 0, retried: 3, recovered: 0 })
    for (const r of await rows()) {
      expect(r.status).toBe('pending')
      expect(r.attempts).toBe(1)
      expect(r.last_error).toMatch(/ECONNREFUSED/)
      expect(r.last_error).not.toMatch(/\n|\bat\s+\S+\s+\(/) // one line, no stack
      expect(r.last_error!.length).toBeLessThanOrEqual(300)
      expect(r.next_attempt_at.getTime()).toBe(t0.getTime() + 15_000)
    }

    // not due yet: no attempt is made or counted
    expect(await deliverDue(db, transportTo(port), { now: plus(t0, 14_000) })).toMatchObject({ retried: 0, sent: 0 })
    expect((await rows()).map((r) => r.attempts)).toEqual([1, 1, 1])

    // due again and still down: the wait doubles
    const t1 = plus(t0, 15_000)
    expect(await deliverDue(db, transportTo(port), { now: t1 })).toMatchObject({ retried: 3 })
    for (const r of await rows()) {
      expect(r.attempts).toBe(2)
      expect(r.next_attempt_at.getTime()).toBe(t1.getTime() + 30_000)
    }

    // the server is back at the same address
    const server = await smtp({ port })
    expect(await deliverDue(db, transportTo(port), { now: t1 })).toMatchObject({ sent: 0 }) // still backing off
    const t2 = plus(t1, 30_000)
    expect(await deliverDue(db, transportTo(port), { now: t2 })).toEqual({ sent: 3, failed: 0, retried: 0, recovered: 0 })
    expect(await deliverDue(db, transportTo(port), { now: plus(t2, 3_600_000) })).toMatchObject({ sent: 0 })
    await server.waitFor(3)
    await new Promise((r) => setTimeout(r, 200))
    expect(server.messages.map((m) => m.subject).sort()).toEqual([1, 2, 3].map((n) => `Please sign case ${n} (${t})`))
    expect((await rows()).map((r) => [r.status, r.attempts])).toEqual([['sent', 3], ['sent', 3], ['sent', 3]])
  })

  it('treats a 451 answer as temporary and caps the wait at 30 minutes', async () => {
    const server = await smtp({ refuse: true })
    await enqueueMail(db, { to: `stores-${tag()}@example.test`, subject: 'Low stock: nails', text: 'Two left.', kind: 'low_stock' })
    let now = new Date(Date.now() + 1000)
    for (let i = 1; i <= 9; i++) {
      expect(await deliverDue(db, transportTo(server.port), { now })).toMatchObject({ retried: 1, failed: 0 })
      const [r] = await rows()
      expect(r!.attempts).toBe(i)
      expect(r!.last_error).toMatch(/451/)
      const wait = r!.next_attempt_at.getTime() - now.getTime()
      expect(wait).toBe(Math.min(15_000 * 2 ** (i - 1), 30 * 60_000))
      now = r!.next_attempt_at
    }
    expect(server.refused).toBe(9)
    expect(server.messages).toHaveLength(0)
    server.refuse = false
    expect(await deliverDue(db, transportTo(server.port), { now })).toMatchObject({ sent: 1 })
    expect(await server.waitFor(1)).toHaveLength(1)
  })

  it('gives up after maxAttempts and never sends a failed message', async () => {
    const port = await deadPort()
    await enqueueMail(db, { to: `gone-${tag()}@example.test`, subject: 'Never delivered', text: 'x', kind: 'recall_notice' })
    let now = new Date(Date.now() + 1000)
    const results = []
    for (let i = 0; i < 3; i++) {
      results.push(await deliverDue(db, transportTo(port), { now, maxAttempts: 3 }))
      now = plus(now, 3_600_000)
    }
    expect(results.map((r) => [r.retried, r.failed])).toEqual([[1, 0], [1, 0], [0, 1]])
    const [r] = await rows()
    expect(r).toMatchObject({ status: 'failed', attempts: 3, sent_at: null })
    expect(r!.last_error).toMatch(/ECONNREFUSED/)

    const server = await smtp({ port })
    expect(await deliverDue(db, transportTo(port), { now: plus(now, 86_400_000), maxAttempts: 3 })).toMatchObject({ sent: 0, failed: 0 })
    await new Promise((res) => setTimeout(res, 200))
    expect(server.messages).toHaveLength(0)
  })

  it('sends each message once when two senders race over the same rows', async () => {
    const server = await smtp()
    const t = tag()
    const count = 30
    for (let i = 0; i < count; i++) {
      await enqueueMail(db, { to: `race-${i}-${t}@example.test`, subject: `race ${t} #${i}`, text: `message ${i}`, kind: 'low_stock' })
    }
    // small batches so that the two senders interleave claim after claim
    async function drain(transport: Transporter) {
      let sent = 0
      for (;;) {
        const r = await deliverDue(db, transport, { batch: 3 })
        sent += r.sent
        if (r.sent + r.retried + r.failed === 0) return sent
      }
    }
    const [a, b, c] = await Promise.all([drain(transportTo(server.port)), drain(transportTo(server.port)), drain(transportTo(server.port))])
    expect(a + b + c).toBe(count)
    await server.waitFor(count)
    await new Promise((r) => setTimeout(r, 200))
    const subjects = server.messages.map((m) => m.subject)
    expect(subjects).toHaveLength(count)
    expect(new Set(subjects).size).toBe(count)
    expect((await rows()).every((r) => r.status === 'sent' && r.attempts === 1)).toBe(true)

    // one claim statement racing another directly
    for (let i = 0; i < count; i++) {
      await enqueueMail(db, { to: `race2-${i}-${t}@example.test`, subject: `race2 ${t} #${i}`, text: 'x', kind: 'low_stock' })
    }
    const [x, y] = await Promise.all([
      deliverDue(db, transportTo(server.port), { batch: 100 }),
      deliverDue(db, transportTo(server.port), { batch: 100 }),
    ])
    expect(x.sent + y.sent).toBe(count)
    await server.waitFor(2 * count)
    await new Promise((r) => setTimeout(r, 200))
    expect(server.messages).toHaveLength(2 * count)
    expect(new Set(server.messages.map((m) => m.subject)).size).toBe(2 * count)
  }, 60_000) // each SMTP session costs ~0.1 s (the server's greeting delay)

  it('takes back a message from a sender that stopped in the middle, and leaves a live claim alone', async () => {
    const server = await smtp()
    const t = tag()
    const crashed = await enqueueMail(db, { to: `a-${t}@example.test`, subject: `crashed ${t}`, text: 'x', kind: 'signing_request' })
    const live = await enqueueMail(db, { to: `b-${t}@example.test`, subject: `live ${t}`, text: 'x', kind: 'signing_request' })
    // a claim is 'sending' with next_attempt_at = end of its 10-minute lease
    await db.updateTable('outbox').set({ status: 'sending', next_attempt_at: sql<Date>`now() - interval '1 second'` }).where('id', '=', crashed!).execute()
    await db.updateTable('outbox').set({ status: 'sending', next_attempt_at: sql<Date>`now() + interval '9 minutes'` }).where('id', '=', live!).execute()

    expect(await deliverDue(db, transportTo(server.port))).toEqual({ sent: 1, failed: 0, retried: 0, recovered: 1 })
    await server.waitFor(1)
    expect(server.messages.map((m) => m.subject)).toEqual([`crashed ${t}`])
    const byId = new Map((await rows()).map((r) => [r.id, r]))
    expect(byId.get(crashed!)).toMatchObject({ status: 'sent', attempts: 2 })
    expect(byId.get(live!)).toMatchObject({ status: 'sending', attempts: 0 })

    // a real claim by deliverDue, left behind: recovered once 10 minutes have passed
    await db.updateTable('outbox').set({ status: 'pending', next_attempt_at: sql<Date>`now()` }).where('id', '=', live!).execute()
    const stuckAt = new Date(Date.now() + 1000)
    await sql`UPDATE outbox SET status = 'sending', next_attempt_at = ${stuckAt.toISOString()}::timestamptz + interval '10 minutes' WHERE id = ${live}`.execute(db)
    expect(await deliverDue(db, transportTo(server.port), { now: plus(stuckAt, 9 * 60_000) })).toMatchObject({ sent: 0, recovered: 0 })
    expect(await deliverDue(db, transportTo(server.port), { now: plus(stuckAt, 10 * 60_000 + 1000) })).toMatchObject({ sent: 1, recovered: 1 })
    await server.waitFor(2)
    expect(server.messages.map((m) => m.subject)).toEqual([`crashed ${t}`, `live ${t}`])
  })
})

describe('transportFromEnv and the worker', () => {
  it('has no transport without SMTP_URL, and one that delivers with it', async () => {
    const saved = process.env.MAIL_FROM
    delete process.env.MAIL_FROM
    onTestFinished(() => { if (saved !== undefined) process.env.MAIL_FROM = saved })
    expect(transportFromEnv({})).toBeNull()
    expect(transportFromEnv({ SMTP_URL: '  ' })).toBeNull()
    const server = await smtp()
    const transport = transportFromEnv({ SMTP_URL: server.url })!
    transports.push(transport)
    await enqueueMail(db, { to: `env-${tag()}@example.test`, subject: 'From SMTP_URL', text: 'x', kind: 'low_stock' })
    expect(await deliverDue(db, transport)).toMatchObject({ sent: 1 })
    const [m] = await server.waitFor(1)
    expect(m!.subject).toBe('From SMTP_URL')
    // without MAIL_FROM, the default sender
    expect(m!.from?.value).toEqual([{ name: 'Isthmus', address: 'isthmus@localhost' }])
  })

  it('delivers soon after kick(), long before the interval, and stops cleanly', async () => {
    const server = await smtp()
    const worker = startOutboxWorker(() => db, { intervalMs: 60_000, transport: transportTo(server.port) })
    try {
      await new Promise((r) => setTimeout(r, 300)) // the first run at start finds nothing
      await enqueueMail(db, { to: `kick-${tag()}@example.test`, subject: 'Kicked', text: 'x', kind: 'signing_request' })
      worker.kick()
      expect((await server.waitFor(1, 3000))[0]!.subject).toBe('Kicked')
    } finally {
      await worker.stop()
    }
    // stopped: nothing more is sent
    await enqueueMail(db, { to: `after-${tag()}@example.test`, subject: 'After stop', text: 'x', kind: 'signing_request' })
    worker.kick()
    await new Promise((r) => setTimeout(r, 300))
    expect(server.messages).toHaveLength(1)
  })

  it('keeps running through errors instead of throwing out of the loop', async () => {
    const server = await smtp()
    let calls = 0
    const worker = startOutboxWorker(() => {
      calls++
      if (calls === 1) throw new Error('database unavailable')
      return db
    }, { intervalMs: 50, transport: transportTo(server.port) })
    try {
      await enqueueMail(db, { to: `resilient-${tag()}@example.test`, subject: 'Despite errors', text: 'x', kind: 'low_stock' })
      expect((await server.waitFor(1, 3000))[0]!.subject).toBe('Despite errors')
      expect(calls).toBeGreaterThan(1)
    } finally {
      await worker.stop()
    }
  })
})
