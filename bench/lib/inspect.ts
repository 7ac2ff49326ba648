// A CPU profile of the running server over just a load window, through its inspector (--inspect on
// 127.0.0.1): start-up and idle time stay out of it, and the server needs no restart.
import type { CpuProfile } from './profile'

export async function profileDuring<T>(wsUrl: string, fn: () => Promise<T>): Promise<{ result: T; profile: CpuProfile }> {
  const WS: any = (globalThis as any).WebSocket ?? (await import('ws')).default
  const ws = new WS(wsUrl)
  await new Promise<void>((resolve, reject) => {
    ws.onopen = () => resolve()
    ws.onerror = (e: unknown) => reject(new Error(`inspector connection failed: ${String((e as any)?.message ?? e)}`))
  })
  let next = 0
  const waiting = new Map<number, { resolve: (v: any) => void; reject: (e: Error) => void }>()
  ws.onmessage = (m: { data: unknown }) => {
    const msg = JSON.parse(String(m.data))
    const w = msg.id !== undefined ? waiting.get(msg.id) : undefined
    if (!w) return
    waiting.delete(msg.id)
    if (msg.error) w.reject(new Error(msg.error.message))
    else w.resolve(msg.result)
  }
  const send = (method: string, params: object = {}) => new Promise<any>((resolve, reject) => {
    const id = ++next
    waiting.set(id, { resolve, reject })
    ws.send(JSON.stringify({ id, method, params }))
  })
  try {
    await send('Profiler.enable')
    await send('Profiler.setSamplingInterval', { interval: 500 })
    await send('Profiler.start')
    const result = await fn()
    const { profile } = await send('Profiler.stop')
    return { result, profile }
  } finally {
    ws.close()
  }
}
