// Mutation testing of the engine's cell model, thermal network and charging controller.
// `npm run mutants` (slow: not part of `npm test` or CI). See docs/mutation-testing.md.
//
// PARETHERM_MUTATE=cell-model,thermal narrows the run to some of the modules (each selection keeps its own
// incremental file and report, so reruns only test mutants whose code or tests changed).
const MODULES = ['cell-model', 'thermal', 'simulate'];
const picked = (process.env.PARETHERM_MUTATE ?? '')
	.split(',')
	.map((s) => s.trim())
	.filter(Boolean);
for (const m of picked) {
	if (!MODULES.includes(m)) throw new Error(`PARETHERM_MUTATE: unknown module "${m}"; choose from ${MODULES.join(', ')}`);
}
const modules = picked.length ? picked : MODULES;
const tag = picked.length ? `-${modules.join('-')}` : '';

/** @type {import('@stryker-mutator/api/core').PartialStrykerOptions} */
export default {
	testRunner: 'vitest',
	vitest: { configFile: 'vitest.mutants.config.ts', related: true },
	plugins: ['@stryker-mutator/vitest-runner'],
	mutate: modules.map((m) => `src/lib/engine/${m}.ts`),
	coverageAnalysis: 'perTest',
	// Code that only runs while a test file is being collected (module constants, results computed at
	// describe level) cannot be attributed to a test; such mutants are reported as "Ignored" and a
	// mutant reached both ways runs only the tests that reach it.
	ignoreStatic: true,
	// The machine is shared: one test process.
	concurrency: 1,
	dryRunTimeoutMinutes: 60,
	timeoutFactor: 2,
	timeoutMS: 30_000,
	incremental: true,
	incrementalFile: `reports/mutation/stryker-incremental${tag}.json`,
	reporters: ['clear-text', 'progress-append-only', 'html', 'json'],
	htmlReporter: { fileName: `reports/mutation/index${tag}.html` },
	jsonReporter: { fileName: `reports/mutation/mutation${tag}.json` },
	clearTextReporter: { allowColor: false, logTests: false, reportMutants: false, reportScoreTable: true },
	thresholds: { high: 90, low: 80, break: null },
	ignorePatterns: ['build', 'data', 'test-results', 'docs/screenshots'],
	tempDirName: '.stryker-tmp',
	cleanTempDir: true
};
