// A real SMTP server on 127.0.0.1 that keeps what it receives, standing in for the hosted mail service.
// `refuse = true` answers 451 (a temporary outage); stop() and startSmtp({ port }) again is a server
// that was down (connection refused) and came back at the same address.
import { SMTPServer, type SMTPServerError } from 'smtp-server'
import { simpleParser, type ParsedMail } from 'mailparser'

export interface CapturedSmtp {
  port: number
  /** smtp://127.0.0.1:port, as SMTP_URL takes it */
  url: string
  messages: ParsedMail[]
  /** MAIL FROM / RCPT TO of each message, in the same order as messages */
  envelopes: { from: string; to: string[] }[]
  /** while true, every recipient is refused with 451 */
  refuse: boolean
  /** how many recipients were refused */
  refused: number
  /** resolves once at least n messages arrived; rejects after ms */
  waitFor(n: number, ms?: number): Promise<ParsedMail[]>
  stop(): Promise<void>
}

export async function startSmtp(opts: { port?: number; refuse?: boolean } = {}): Promise<CapturedSmtp> {
  const captured: CapturedSmtp = {
    port: 0,
    url: '',
    messages: [],
    envelopes: [],
    refuse: opts.refuse ?? false,
    refused: 0,
    waitFor,
    stop,
  }

  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    logger: false,
    // a reverse DNS lookup per connection costs ~100 ms here, for nothing
    disableReverseLookup: true,
    // tests stop servers often; do not wait 30 s for a client that lingers
    closeTimeout: 500,
    onRcptTo(_address, _session, callback) {
      if (!captured.refuse) return callback()
      captured.refused++
      const err: SMTPServerError = new Error('4.3.2 Service temporarily unavailable, try again later')
      err.responseCode = 451
      callback(err)
    },
    onData(stream, session, callback) {
      // answer only once parsed, so a sendMail that resolved means the message is in `messages`
      simpleParser(stream).then(
        (mail) => {
          captured.envelopes.push({
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
            to: session.envelope.rcptTo.map((r) => r.address),
          })
          captured.messages.push(mail)
          callback()
        },
        (err: Error) => callback(err),
      )
    },
  })

  await new Promise<void>((resolve, reject) => {
    const onError = (err: Error) => reject(err)
    server.once('error', onError)
    server.listen(opts.port ?? 0, '127.0.0.1', () => {
      server.off('error', onError)
      resolve()
    })
  })
  const address = server.server.address()
  if (!address || typeof address === 'string') throw new Error('SMTP test server has no TCP address')
  captured.port = address.port
  captured.url = `smtp://127.0.0.1:${address.port}`

  async function waitFor(n: number, ms = 5000): Promise<ParsedMail[]> {
    const until = Date.now() + ms
    while (captured.messages.length < n) {
      if (Date.now() > until) {
        throw new Error(`expected ${n} message(s) at the SMTP test server within ${ms} ms, got ${captured.messages.length}`)
      }
      await new Promise((r) => setTimeout(r, 20))
    }
    return captured.messages.slice()
  }

  let stopping: Promise<void> | undefined
  function stop(): Promise<void> {
    stopping ??= new Promise<void>((resolve) => server.close(() => resolve()))
    return stopping
  }

  return captured
}

/** The recipient addresses of a parsed message (its To: header). */
export function toAddresses(m: ParsedMail): string[] {
  const to = m.to ? (Array.isArray(m.to) ? m.to : [m.to]) : []
  return to.flatMap((a) => a.value.map((v) => v.address ?? ''))
}
