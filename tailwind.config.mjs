/** @type {import('tailwindcss').Config} */
export default {
  content: ['./src/**/*.{astro,html,ts,tsx,md}'],
  darkMode: 'media',
  theme: {
    extend: {
      colors: {
        // Paper and ink, with one ember accent for actions and the selected state.
        paper: { DEFAULT: 'rgb(var(--paper) / <alpha-value>)', raised: 'rgb(var(--paper-raised) / <alpha-value>)' },
        ink: { DEFAULT: 'rgb(var(--ink) / <alpha-value>)', soft: 'rgb(var(--ink-soft) / <alpha-value>)' },
        rule: 'rgb(var(--rule) / <alpha-value>)',
        mat: 'rgb(var(--mat) / <alpha-value>)',
        ember: { DEFAULT: 'rgb(var(--ember) / <alpha-value>)', deep: 'rgb(var(--ember-deep) / <alpha-value>)' },
      },
      fontFamily: {
        display: ['"DM Serif Display"', 'Georgia', 'serif'],
        sans: ['"Inter Variable"', 'system-ui', 'sans-serif'],
      },
      maxWidth: { gallery: '96rem' },
    },
  },
  plugins: [],
};
