// What waits on this device to be sent (scans and readings), shared by the top bar's "N pending" and
// the pages that list what is waiting. The queue itself lives in IndexedDB (useScanQueue); this store
// mirrors it for the screens after every change.
import { defineStore } from 'pinia'
import type { QueuedCapture } from '~/composables/useScanQueue'

export const useDeviceQueueStore = defineStore('deviceQueue', {
  state: () => ({ entries: [] as QueuedCapture[] }),
  getters: {
    /** still to be sent (refused readings held for the person to read are not pending) */
    pending: (s) => s.entries.filter((e) => !e.held).length,
  },
  actions: {
    mirror(entries: QueuedCapture[]) { this.entries = entries },
  },
})
