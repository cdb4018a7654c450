import type { Config } from 'tailwindcss'

// Ratchet's own palette: warm graphite neutrals, one accent ("signal teal"),
// and four status colours that always travel with a word and a shape.
export default {
  darkMode: 'class',
  content: [
    './app.vue',
    './error.vue',
    './components/**/*.{vue,ts}',
    './layouts/**/*.vue',
    './pages/**/*.vue',
    './composables/**/*.ts',
  ],
  theme: {
    extend: {
      fontFamily: {
        sans: ['Manrope', 'ui-sans-serif', 'system-ui', 'sans-serif'],
        mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'monospace'],
      },
      colors: {
        ink: {
          50: '#f7f7f5',
          100: '#eeede9',
          200: '#dcdad3',
          300: '#bfbcb2',
          400: '#9a968a',
          500: '#68645a',
          600: '#5e5b52',
          700: '#47453f',
          800: '#2e2d29',
          900: '#1d1c1a',
          950: '#121210',
        },
        accent: {
          50: '#ecfbf8',
          100: '#cff4ec',
          200: '#a0e8da',
          300: '#66d4c3',
          400: '#33b8a8',
          500: '#1a9c8e',
          600: '#127d74',
          700: '#12645e',
          800: '#13504c',
          900: '#134340',
        },
        // set per theme in assets/css/main.css, so status words and marks read at 4.5:1 or more
        // on both the light and the dark backgrounds (WCAG 2.1, 1.4.3)
        status: {
          met: 'rgb(var(--status-met) / <alpha-value>)',
          marginal: 'rgb(var(--status-marginal) / <alpha-value>)',
          short: 'rgb(var(--status-short) / <alpha-value>)',
          untested: 'rgb(var(--status-untested) / <alpha-value>)',
        },
      },
      borderRadius: {
        card: '0.875rem',
        chip: '0.375rem',
      },
      boxShadow: {
        card: '0 1px 2px rgb(18 18 16 / 0.06), 0 4px 12px -4px rgb(18 18 16 / 0.10)',
        lift: '0 10px 30px -10px rgb(18 18 16 / 0.25)',
      },
    },
  },
  plugins: [],
} satisfies Config
