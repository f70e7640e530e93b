import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// The API streams raw bodies from scripts (no Origin header); forms stay CSRF-protected.
		csrf: { trustedOrigins: [] },
		typescript: {
			config(tsconfig) {
				tsconfig.include.push(
					'../cli/**/*.ts',
					'../eslint.config.js',
					'../scripts/**/*.ts',
					'../tests/**/*.ts',
					'../migrations/**/*.ts',
					'../seeds/**/*.ts',
					'../vite.config.ts',
					'../tailwind.config.ts'
				);
				return tsconfig;
			}
		}
	}
};

export default config;
