import type { Config } from 'tailwindcss';

// Tideward's own palette: deep water, lagoon, wet sand, sea-glass and a warm coral accent.
export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				deep: {
					50: '#eef6f8',
					100: '#d5e8ee',
					200: '#a9d0dc',
					300: '#74b1c3',
					400: '#3f8ea6',
					500: '#23718b',
					600: '#185a71',
					700: '#13485b',
					800: '#103a4a',
					900: '#0c2b37',
					950: '#071c25'
				},
				lagoon: {
					50: '#effbf8',
					100: '#d2f3eb',
					200: '#a5e6d8',
					300: '#6fd1bf',
					400: '#3fb5a2',
					500: '#259887',
					600: '#1b7a6e',
					700: '#19625a',
					800: '#174f4a',
					900: '#15413e'
				},
				sand: {
					50: '#fbf8f1',
					100: '#f5eedd',
					200: '#eadcb9',
					300: '#dcc48e',
					400: '#cca866',
					500: '#bf914b',
					600: '#a6753e',
					700: '#855a35',
					800: '#6d4a31',
					900: '#5b3e2b'
				},
				coral: {
					50: '#fdf3f1',
					100: '#fbe4df',
					200: '#f8cdc4',
					300: '#f2aa9b',
					400: '#e97c66',
					500: '#dc5a40',
					600: '#c3432b',
					700: '#a33622',
					800: '#873021',
					900: '#712d21'
				},
				ink: {
					500: '#4d5f68',
					600: '#3d4d55',
					700: '#2f3d44',
					800: '#223038',
					900: '#14232b'
				}
			},
			fontFamily: {
				// The "fallback" faces (src/fonts.css) are sized like ours: no jump when ours arrive.
				heading: ['Merriweather', '"Merriweather fallback"', 'Georgia', 'Cambria', 'serif'],
				sans: [
					'"Source Sans 3"',
					'"Source Sans 3 fallback"',
					'ui-sans-serif',
					'system-ui',
					'Segoe UI',
					'Arial',
					'sans-serif'
				]
			}
		}
	}
} satisfies Config;
