import type { Config } from 'tailwindcss';

/**
 * Glasscrib design tokens. Palette: "ink" text on warm "paper", a cool "lens" blue-green for
 * actions and links, "brass" for highlights (like the lab's brass mounts), "beam" red reserved
 * for danger and laser cautions. Type: Lato, bundled with the app.
 */
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	darkMode: 'class',
	theme: {
		extend: {
			colors: {
				ink: {
					50: '#f4f6f8',
					100: '#e3e8ee',
					200: '#c7d0db',
					300: '#9eadbf',
					// Darkened from #6f849c (3.6:1 on paper) so that small grey text reaches WCAG 2.x AA:
					// 4.78:1 on paper #f8f6f1, 5.16:1 on white, 4.76:1 on ink-50.
					400: '#5b6f87',
					500: '#506680',
					600: '#3e5068',
					700: '#324155',
					800: '#253142',
					900: '#182130',
					950: '#0e141d'
				},
				paper: {
					DEFAULT: '#f8f6f1',
					50: '#fdfcfa',
					100: '#f8f6f1',
					200: '#efebe1',
					300: '#e2dccd'
				},
				lens: {
					50: '#ecfbf9',
					100: '#cff3ef',
					200: '#a1e6e0',
					300: '#66d1ca',
					400: '#33b3ad',
					500: '#189792',
					600: '#0f7976',
					700: '#10605f',
					800: '#124d4d',
					900: '#133f40'
				},
				brass: {
					100: '#fbf1d6',
					300: '#ecc96c',
					500: '#c9962a',
					700: '#8a6418'
				},
				beam: {
					50: '#fdf1f1',
					100: '#fadcdc',
					500: '#cf3a3a',
					600: '#b12a2a',
					700: '#8e2222'
				}
			},
			fontFamily: {
				sans: ['Lato', 'system-ui', 'sans-serif'],
				mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'monospace']
			},
			fontSize: {
				'2xs': ['0.6875rem', { lineHeight: '1rem' }]
			},
			spacing: {
				gutter: '1.25rem',
				rail: '15rem'
			},
			borderRadius: {
				card: '0.625rem'
			},
			boxShadow: {
				card: '0 1px 2px rgba(24, 33, 48, 0.06), 0 2px 8px rgba(24, 33, 48, 0.05)'
			}
		}
	}
} satisfies Config;
