// True once the page runs in the browser: forms stay disabled until then, so a tap before the scripts
// load can never post a password in a URL.
export function useHydrated() {
  const ready = ref(false)
  onMounted(() => { ready.value = true })
  return ready
}
