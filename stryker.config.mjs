// Mutation testing of the engine's cell model, thermal network and charging controller.
// `npm run mutants` (slow: not part of `npm test` or CI). See docs/mutation-testing.md.
/** @type {import('@stryker-mutator/api/core').PartialStrykerOptions} */
export default {
	testRunner: 'vitest',
	vitest: { configFile: 'vitest.mutants.config.ts', related: true },
	plugins: ['@stryker-mutator/vitest-runner'],
	mutate: ['src/lib/engine/cell-model.ts', 'src/lib/engine/thermal.ts', 'src/lib/engine/simulate.ts'],
	coverageAnalysis: 'perTest',
	// Code that only runs while a test file is being collected (module constants, results computed at
	// describe level) cannot be attributed to a test; those mutants are reported as "Ignored".
	ignoreStatic: true,
	// The machine is shared: one test process.
	concurrency: 1,
	dryRunTimeoutMinutes: 40,
	timeoutFactor: 2,
	timeoutMS: 30_000,
	incremental: true,
	incrementalFile: 'reports/mutation/stryker-incremental.json',
	reporters: ['clear-text', 'progress-append-only', 'html', 'json'],
	htmlReporter: { fileName: 'reports/mutation/index.html' },
	jsonReporter: { fileName: 'reports/mutation/mutation.json' },
	clearTextReporter: { allowColor: false, logTests: false, reportMutants: false, reportScoreTable: true },
	thresholds: { high: 90, low: 80, break: null },
	ignorePatterns: ['build', 'data', 'test-results', 'docs/screenshots'],
	tempDirName: '.stryker-tmp',
	cleanTempDir: true
};
