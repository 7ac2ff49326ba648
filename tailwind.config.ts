import type { Config } from 'tailwindcss'

// Design tokens (DESIGN.md). Colours are CSS variables so that the dim and high-contrast themes
// (app/assets/css/main.css) swap them per device without new classes.
const v = (name: string) => `rgb(var(--c-${name}) / <alpha-value>)`

export default {
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      colors: {
        ink: v('ink'),
        bone: v('bone'),
        slate: v('slate'),
        line: v('line'),
        surface: v('surface'),
        accepted: v('accepted'),
        check: v('check'),
        refused: v('refused'),
        focus: v('focus'),
        'on-signal': v('on-signal'),
      },
      fontFamily: {
        sans: ['"Inter Variable"', 'Inter', 'system-ui', 'sans-serif'],
      },
      fontSize: {
        // Numbers that matter: ≥ 28 px on the tablet.
        reading: ['2rem', { lineHeight: '2.5rem', fontWeight: '600' }],
        'reading-lg': ['2.75rem', { lineHeight: '3.25rem', fontWeight: '600' }],
      },
      minWidth: { touch: '44px' },
      minHeight: { touch: '44px' },
      spacing: { touch: '44px' },
      ringColor: { DEFAULT: v('focus') },
    },
  },
  plugins: [],
} satisfies Config
