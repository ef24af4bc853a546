import type { Config } from 'tailwindcss';

/**
 * Paretherm's theme. A cold-to-warm axis for temperature-coded data (glacier → ember), deep
 * "shale" for chrome, and one accent ("current") for actions. Status colours are separate so the
 * temperature scale never doubles as a status.
 */
export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	theme: {
		extend: {
			fontFamily: {
				sans: ['Manrope', 'system-ui', 'sans-serif']
			},
			colors: {
				shale: {
					50: '#f4f6f8',
					100: '#e6eaef',
					200: '#cdd4dd',
					300: '#a7b2c0',
					400: '#7a889b',
					500: '#5b687b',
					600: '#465264',
					700: '#37414f',
					800: '#262e39',
					900: '#171c24'
				},
				glacier: { 100: '#dcecf7', 300: '#8cc2e6', 500: '#2f8bc9', 700: '#1b5f8f' },
				ember: { 100: '#fde9d7', 300: '#f7b27a', 500: '#e2702a', 700: '#a84a12' },
				current: { 50: '#eef4ff', 100: '#dce7fe', 500: '#3f5bd9', 600: '#3048c2', 700: '#263a9c' },
				ok: '#2e7d4f',
				warn: '#b7791f',
				bad: '#b42318'
			},
			borderRadius: { card: '0.6rem' }
		}
	}
} satisfies Config;
