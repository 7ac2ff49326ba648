// The open case's detail and sizing, shared by the case's steps (one fetch each, refreshed after writes).
export function useCaseDetail(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/cases/${toValue(id)}`, { key: `case-${toValue(id)}`, dedupe: 'defer' })
}

export function useCaseSizing(id: MaybeRefOrGetter<number>) {
  return useFetch(() => `/api/cases/${toValue(id)}/sizing`, { key: `case-sizing-${toValue(id)}`, dedupe: 'defer' })
}

/** Refresh both after a write. */
export async function refreshCase(id: number) {
  await Promise.all([refreshNuxtData(`case-${id}`), refreshNuxtData(`case-sizing-${id}`)])
}
