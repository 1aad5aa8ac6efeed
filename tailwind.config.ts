import type { Config } from 'tailwindcss';

/** Asterism's own palette: warm paper, ink, one deep accent. Values live in app/globals.css as variables for dark mode. */
const config: Config = {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}'],
  darkMode: 'media',
  theme: {
    extend: {
      colors: {
        paper: { DEFAULT: 'var(--paper)', raised: 'var(--paper-raised)', sunk: 'var(--paper-sunk)' },
        ink: { DEFAULT: 'var(--ink)', muted: 'var(--ink-muted)', faint: 'var(--ink-faint)' },
        rule: 'var(--rule)',
        accent: { DEFAULT: 'var(--accent)', ink: 'var(--accent-ink)', wash: 'var(--accent-wash)' },
        danger: { DEFAULT: 'var(--danger)', wash: 'var(--danger-wash)' },
        caution: { DEFAULT: 'var(--caution)', wash: 'var(--caution-wash)' },
      },
      fontFamily: {
        sans: ['var(--font-sans)', 'ui-sans-serif', 'system-ui', 'sans-serif'],
      },
    },
  },
};

export default config;
