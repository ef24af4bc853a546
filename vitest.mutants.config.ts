import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

/**
 * Engine tests only, for mutation testing (`npm run mutants`, stryker.config.mjs).
 * No server, browser or hardening suites. The TypeScript options are given here so the
 * run does not depend on `svelte-kit sync` having written .svelte-kit/tsconfig.json.
 */
export default defineConfig({
	resolve: {
		alias: {
			$lib: fileURLToPath(new URL('./src/lib', import.meta.url))
		}
	},
	esbuild: {
		tsconfigRaw: JSON.stringify({ compilerOptions: { target: 'esnext', verbatimModuleSyntax: true, useDefineForClassFields: true } })
	},
	test: {
		include: ['tests/engine/**/*.test.ts'],
		environment: 'node',
		testTimeout: 120_000,
		hookTimeout: 120_000
	}
});
