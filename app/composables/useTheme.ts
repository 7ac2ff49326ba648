// Theme per device (not per person): light by default, dim for darkened rooms, contrast for bright ones.
export type Theme = 'light' | 'dim' | 'contrast'
export const THEMES: { id: Theme; label: string }[] = [
  { id: 'light', label: 'Light' },
  { id: 'dim', label: 'Dim' },
  { id: 'contrast', label: 'High contrast' },
]

export function useTheme() {
  const cookie = useCookie<Theme>('isthmus-theme', { default: () => 'light', maxAge: 60 * 60 * 24 * 365, sameSite: 'lax' })
  const theme = computed<Theme>({
    get: () => (THEMES.some((t) => t.id === cookie.value) ? cookie.value : 'light'),
    set: (t) => { cookie.value = t },
  })
  return { theme, themes: THEMES }
}
