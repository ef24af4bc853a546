import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// SvelteKit's origin check on form actions is on by default and stays on.
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
