import { describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import ConnectionStatus from '~/components/ConnectionStatus.vue'
import { useDeviceQueueStore } from '~/stores/deviceQueue'

const entry = (n: number, held = false) => ({
  caseId: 1, kind: 'scan' as const, body: { clientKey: `k${n}` }, queuedAt: n,
  ...(held ? { held: { status: 409, message: 'This case is closed.', at: n } } : {}),
})

// common practice: a capture waiting on the device is shown, so nobody thinks it was saved
describe('ConnectionStatus and the device queue store', () => {
  it('shows how many captures wait to be sent, not counting refusals held for the person to read', async () => {
    const store = useDeviceQueueStore()
    store.mirror([])
    const w = await mountSuspended(ConnectionStatus)
    expect(w.find('[data-test="pending-count"]').exists()).toBe(false)
    store.mirror([entry(1), entry(2), entry(3, true)])
    await w.vm.$nextTick()
    expect(store.pending).toBe(2)
    expect(w.find('[data-test="pending-count"]').text()).toBe('2 pending')
    store.mirror([entry(3, true)])
    await w.vm.$nextTick()
    expect(w.find('[data-test="pending-count"]').exists()).toBe(false)
  })
})
