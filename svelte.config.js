import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// The origin check on state-changing requests lives in src/hooks.server.ts: it covers every
		// method and content type (SvelteKit's own covers form content types only) and answers JSON
		// routes with { error, field }. It refuses form posts without a matching Origin as
		// SvelteKit's does, so SvelteKit's is turned off rather than answering first with its own body.
		csrf: { trustedOrigins: ['*'] },
		csp: {
			mode: 'hash',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				// ECharts and Svelte transitions set inline styles.
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'frame-ancestors': ['none'],
				'form-action': ['self'],
				'base-uri': ['self'],
				'object-src': ['none']
			}
		},
		typescript: {
			config(cfg) {
				cfg.compilerOptions ??= {};
				cfg.compilerOptions.paths ??= {};
				// odex ships no type declarations; ours live in src/types.
				cfg.compilerOptions.paths['odex'] = ['../src/types/odex.d.ts'];
				return cfg;
			}
		}
	}
};

export default config;
