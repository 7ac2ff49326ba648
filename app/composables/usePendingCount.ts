// Number of scans and readings waiting to be sent (shown in the top bar).
export function usePendingCount() {
  return useState<number>('pending-count', () => 0)
}
