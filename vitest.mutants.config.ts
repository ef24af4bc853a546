import { defineConfig } from 'vitest/config';
import { BaseSequencer, type TestSpecification } from 'vitest/node';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

/**
 * Files run shortest first, the focused `*-checks.test.ts` files before all others: Stryker stops a mutant's
 * run at the first failing test, so quick, sharp checks first make killed mutants cheap. (Vitest's default
 * runs failed and long files first, which suits parallel workers, not a bail-on-first-failure run.)
 */
class QuickFirstSequencer extends BaseSequencer {
	async sort(files: TestSpecification[]): Promise<TestSpecification[]> {
		const root = this.ctx.config.root;
		const rank = (spec: TestSpecification) => {
			const rel = path.relative(root, spec.moduleId);
			const cached = this.ctx.cache.getFileTestResults(`${spec.project.name}:${rel}`);
			return [rel.endsWith('-checks.test.ts') ? 0 : 1, cached?.duration ?? Infinity, rel] as const;
		};
		return [...files].sort((a, b) => {
			const [ga, da, na] = rank(a);
			const [gb, db, nb] = rank(b);
			return ga - gb || da - db || (na < nb ? -1 : na > nb ? 1 : 0);
		});
	}
}

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
		hookTimeout: 120_000,
		sequence: { sequencer: QuickFirstSequencer }
	}
});
