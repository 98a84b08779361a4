import type { Config } from 'tailwindcss'
import defaultTheme from 'tailwindcss/defaultTheme'

// Fourfold's own palette: ink on warm paper, a deep harbour blue for action,
// and status hues that always travel with a word (never colour alone).
export default {
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['"Atkinson Hyperlegible"', ...defaultTheme.fontFamily.sans],
      },
      fontSize: {
        base: ['1.125rem', { lineHeight: '1.65rem' }],
      },
      colors: {
        ink: { DEFAULT: '#1b1f24', soft: '#4a525c', faint: '#6b737d' },
        paper: { DEFAULT: '#fbf8f3', deep: '#f1ebe1', edge: '#d9d0c2' },
        harbour: { 50: '#eef3f9', 100: '#d6e2f0', 500: '#2f5b8f', 600: '#244b78', 700: '#1f3a5f', 800: '#182d4a' },
        fern: { 50: '#edf7ef', 600: '#2f7a43', 800: '#1f5430' },
        saffron: { 50: '#fdf6e3', 600: '#a06800', 800: '#6e4800' },
        brick: { 50: '#fbeeec', 600: '#b3372a', 800: '#7d241b' },
      },
      minHeight: { target: '44px' },
      minWidth: { target: '44px' },
    },
  },
} satisfies Config
