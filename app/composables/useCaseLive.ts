// Follow a case live: server-sent events from /api/cases/:id/events. EventSource reconnects by itself;
// after every (re)connect we refresh, so nothing missed while the Wi-Fi was down stays missing.
export function useCaseLive(caseId: MaybeRefOrGetter<number>, onChange: (kind: string) => void) {
  const connected = ref(false)
  let es: EventSource | null = null
  function open() {
    close()
    es = new EventSource(`/api/cases/${toValue(caseId)}/events`)
    es.addEventListener('ready', () => { connected.value = true; onChange('resync') })
    es.addEventListener('resync', () => onChange('resync'))
    for (const kind of ['item', 'reading', 'decision', 'status']) es.addEventListener(kind, () => onChange(kind))
    es.onerror = () => { connected.value = false }
  }
  function close() {
    es?.close()
    es = null
    connected.value = false
  }
  onMounted(open)
  onBeforeUnmount(close)
  return { connected }
}
