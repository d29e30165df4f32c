import type { Config } from 'tailwindcss';

// Boxwright's palette: ink-slate for text and surfaces, one accent per gas.
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			fontFamily: {
				sans: ['"Nunito Sans"', 'ui-sans-serif', 'system-ui', 'sans-serif']
			},
			colors: {
				ink: {
					50: '#f4f6f8',
					100: '#e6eaef',
					200: '#cdd4dd',
					300: '#a9b4c2',
					400: '#7d8b9e',
					500: '#5d6b7f',
					600: '#475467',
					700: '#364152',
					800: '#242d3a',
					900: '#161c25'
				},
				argon: {
					50: '#f5f3fc',
					100: '#ebe6f8',
					300: '#c2b4ea',
					500: '#8c72d2',
					600: '#7657bd',
					700: '#5f459c'
				},
				nitrogen: {
					50: '#eefaf8',
					100: '#d4f1ec',
					300: '#86d2c6',
					500: '#2f9f8f',
					600: '#218274',
					700: '#1b685e'
				},
				watch: { 100: '#fdf1d6', 600: '#a76a06', 700: '#84530a' },
				alarm: { 100: '#fde2e0', 600: '#c2352b', 700: '#9b2a22' }
			}
		}
	}
} satisfies Config;
