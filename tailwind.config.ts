import type { Config } from 'tailwindcss';

// Rimebook's own design tokens: deep ink text, a frost-blue accent, white and pale-grey surfaces.
// Contrast of each text pairing against white / mist-50 is at least 4.5:1 (WCAG 2.2 AA, 1.4.3);
// ink-500 on white is 5.9:1, frost-700 on white 8.0:1, white on frost-600 6.3:1.
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				ink: { 900: '#0e1a2b', 800: '#1a2940', 700: '#2b3a52', 600: '#3f4e67', 500: '#56657d', 400: '#7d8aa0' },
				frost: {
					50: '#eef5fb',
					100: '#dbeaf6',
					200: '#b9d5ec',
					300: '#8db9df',
					500: '#3b7dbb',
					600: '#1f5f99',
					700: '#184c7c',
					800: '#123a60'
				},
				mist: { 50: '#f6f8fa', 100: '#eceff3', 200: '#dde2e9', 300: '#cdd4dd', 400: '#aab4c2' },
				ok: { 50: '#e9f5ee', 600: '#1d6b45', 700: '#175738' },
				caution: { 50: '#fdf4e3', 600: '#8a5a00', 700: '#704900' },
				alert: { 50: '#fdeceb', 600: '#b3261e', 700: '#8f1e18' }
			},
			fontFamily: {
				sans: ['"Noto Sans"', 'system-ui', 'sans-serif']
			},
			spacing: {
				// A touch target a gloved finger can hit: 48 px minimum (WCAG 2.5.8 asks 24), 56 on the floor.
				touch: '3rem',
				floor: '3.5rem'
			},
			lineHeight: { relaxed: '1.65' }
		}
	}
} satisfies Config;
