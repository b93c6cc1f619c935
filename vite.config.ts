import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	test: {
		include: ['src/**/*.test.ts', 'tests/unit/**/*.test.ts', 'tests/integration/**/*.test.ts'],
		globalSetup: ['tests/setup/global-db.ts'],
		hookTimeout: 30_000,
		testTimeout: 30_000,
		pool: 'forks'
	}
});
