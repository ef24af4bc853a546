import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

export default defineConfig({
	resolve: {
		alias: {
			$lib: fileURLToPath(new URL('./src/lib', import.meta.url))
		}
	},
	test: {
		include: ['tests/**/*.test.ts'],
		environment: 'node',
		// `svelte-kit sync` first: tsconfig.json extends the .svelte-kit/tsconfig.json it writes.
		globalSetup: ['tests/setup/svelte-kit-sync.js'],
		// Budgets for a busy 2-core machine (several times slower than a quiet one); they bound a
		// hung test, they are not speed targets (those live in `npm run bench` and `npm run load`).
		testTimeout: 180_000,
		hookTimeout: 300_000,
		// Integration suites start their own servers and processes, each in its own data folder with
		// its own Redis. Two files at a time even on 2 cores: most integration time is spent waiting on
		// those servers, so the second file fills the gaps (vitest would otherwise use cores − 1 = 1).
		fileParallelism: true,
		pool: 'forks',
		maxWorkers: 2,
		minWorkers: 1
	}
});
