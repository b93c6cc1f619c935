import type { Config } from 'tailwindcss';

export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				sand: { 50: '#fbf8f1' },
				ink: { 900: '#14232b' }
			}
		}
	}
} satisfies Config;
