import type { Config } from 'tailwindcss';

/**
 * Escapement's look: warm paper, ink-blue text, a brass accent (the escapement of a clock is brass), and one
 * colour per audit verdict that is always paired with a glyph and a word, never colour alone.
 */
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				paper: { DEFAULT: '#f7f4ec', deep: '#eee9dc', line: '#ddd5c2' },
				ink: { DEFAULT: '#1c2536', soft: '#44506a', faint: '#7a849a' },
				brass: { DEFAULT: '#a8792a', light: '#d9b46a', dark: '#7a5516' },
				verdict: {
					consistent: '#2f7a62',
					violation: '#b33a2e',
					irreversible: '#9a6a00',
					unbalanced: '#5d5a7a'
				}
			},
			fontFamily: {
				sans: ['"IBM Plex Sans"', 'system-ui', 'sans-serif'],
				mono: ['"IBM Plex Mono"', 'ui-monospace', 'monospace']
			},
			borderRadius: { card: '0.6rem' },
			boxShadow: { card: '0 1px 0 rgba(28,37,54,0.06), 0 2px 8px rgba(28,37,54,0.06)' }
		}
	}
} satisfies Config;
