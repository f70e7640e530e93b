import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	test: {
		projects: [
			{
				extends: true,
				test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node' }
			},
			{
				// API and browser tests load the built app (build/handler.js) as Node would: no Svelte plugin.
				resolve: { alias: { $lib: new URL('./src/lib', import.meta.url).pathname } },
				test: {
					name: 'api',
					include: ['tests/api/**/*.test.ts'],
					environment: 'node',
					globalSetup: ['tests/api/global-setup.ts'],
					fileParallelism: false,
					testTimeout: 60_000,
					hookTimeout: 120_000
				}
			},
			{
				resolve: { alias: { $lib: new URL('./src/lib', import.meta.url).pathname } },
				test: {
					name: 'e2e',
					include: ['tests/e2e/**/*.test.ts'],
					environment: 'node',
					globalSetup: ['tests/api/global-setup.ts'],
					fileParallelism: false,
					testTimeout: 90_000,
					hookTimeout: 120_000
				}
			}
		]
	}
});
