// Screens that exist in this build; the navigation shows only these (and only those the role may open).
export const BUILT_SCREENS: string[] = ['/', '/trace', '/recalls', '/shelf', '/catalog', '/people', '/settings', '/audit']

// The case's four steps (DESIGN.md); a step not built yet is shown but cannot be opened.
export const CASE_STEPS = [
  { to: '', label: 'Readings', enabled: true },
  { to: '/sizes', label: 'Sizes', enabled: true },
  { to: '/implants', label: 'Implants', enabled: true },
  { to: '/record', label: 'Record', enabled: true },
]
