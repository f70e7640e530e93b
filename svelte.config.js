import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// RUNNEL_BUILD_DIR / RUNNEL_KIT_DIR: only for the test that builds a second copy with canary
		// secrets (tests/api/client-bundle-secrets.test.ts); normal builds use build/ and .svelte-kit/.
		adapter: adapter({ out: process.env.RUNNEL_BUILD_DIR || 'build' }),
		outDir: process.env.RUNNEL_KIT_DIR || '.svelte-kit',
		// The CSRF origin check runs in our own `handle` (src/lib/server/http/security.ts): the same rule
		// as SvelteKit's, except that the OAuth token endpoint (RFC 6749 requires a form body) accepts
		// scripts that send no Origin header. '*' turns SvelteKit's built-in copy off; do not add origins here.
		csrf: { trustedOrigins: ['*'] },
		// Content-Security-Policy of every page: self only, a nonce for SvelteKit's inline bootstrap script.
		// Responses that are not pages get theirs in hooks.server.ts; per-route exceptions (the API docs
		// page) go in ROUTE_POLICIES in src/lib/server/http/security.ts.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'object-src': ['none'],
				'frame-ancestors': ['none'],
				'form-action': ['self'],
				'base-uri': ['self']
			}
		},
		typescript: {
			config(tsconfig) {
				tsconfig.include.push(
					'../cli/**/*.ts',
					'../scripts/eslint.config.js',
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
