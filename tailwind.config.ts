import type { Config } from 'tailwindcss';

// Runnel's visual identity, set once here. "Runnel" is a small stream: the palette runs from
// deep creek water (primary) through prairie grass (secondary) to a clay accent for warnings.
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			fontFamily: {
				sans: ['"Public Sans"', 'ui-sans-serif', 'system-ui', 'sans-serif']
			},
			colors: {
				creek: {
					50: '#eef7f8',
					100: '#d5ebee',
					200: '#aed8de',
					300: '#7dbcc6',
					400: '#4a98a6',
					500: '#2f7c8b',
					600: '#246473',
					700: '#1f515e',
					800: '#1c434e',
					900: '#162f37',
					950: '#0c1d22'
				},
				prairie: {
					50: '#f5f8ec',
					100: '#e7efd3',
					200: '#d0e0aa',
					300: '#b1cb78',
					400: '#93b24f',
					500: '#769632',
					600: '#5b7625',
					700: '#465a20',
					800: '#3a491f',
					900: '#323e1e'
				},
				clay: {
					50: '#fcf5ef',
					100: '#f8e6d8',
					200: '#f0cab0',
					300: '#e6a67e',
					400: '#db7d4c',
					500: '#d2612c',
					600: '#b94c22',
					700: '#9a3b1f',
					800: '#7c3220',
					900: '#652b1d'
				},
				stone: {
					50: '#f7f7f5',
					100: '#eeede9',
					200: '#dcdad3',
					300: '#c2bfb4',
					400: '#a19d8f',
					500: '#868173',
					600: '#6c685c',
					700: '#58554c',
					800: '#4a4841',
					900: '#403e39',
					950: '#22211e'
				}
			},
			fontSize: {
				// A 1.2 (minor third) type scale from a 16 px base.
				xs: ['0.694rem', { lineHeight: '1rem' }],
				sm: ['0.833rem', { lineHeight: '1.25rem' }],
				base: ['1rem', { lineHeight: '1.5rem' }],
				lg: ['1.2rem', { lineHeight: '1.75rem' }],
				xl: ['1.44rem', { lineHeight: '2rem' }],
				'2xl': ['1.728rem', { lineHeight: '2.25rem' }],
				'3xl': ['2.074rem', { lineHeight: '2.5rem' }]
			},
			spacing: {
				gutter: '1.5rem',
				section: '2.5rem'
			},
			borderRadius: {
				card: '0.5rem'
			}
		}
	}
} satisfies Config;
