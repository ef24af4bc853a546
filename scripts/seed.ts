/** `npm run seed`: loads the invented demo program (idempotent). */
import { config } from '../src/lib/server/config';
import { seedDemo, DEMO_PASSWORD, DEMO_PEOPLE } from '../src/lib/server/demo/seed';
import { sequelize } from '../src/lib/server/db/index';
import { seedDemoSweep } from '../src/lib/server/sweeps/demo';
import { settleDigests } from '../src/lib/server/sweeps/service';
import { seedDemoChecks } from '../src/lib/server/demo/seed-checks';
import { seedDemoYearInputs, seedDemoYearSweep } from '../src/lib/server/demo/seed-year';

const { programId, userIds } = await seedDemo();
// An invented bench log, a drive profile and one model check, so the Checks page is not empty (fast).
await seedDemoChecks(programId, { engineer: userIds.engineer, architect: userIds.architect });
// Two invented climates and a charging pattern for the year-of-use page (fast).
await seedDemoYearInputs(programId, userIds.engineer);
// The finished demo sweep takes several seconds; test fixtures that do not need it skip it.
if (config().seed.sweep) {
	const t0 = performance.now();
	const sweepId = await seedDemoSweep(programId, userIds.engineer);
	console.log(`Demo sweep ${sweepId} finished (${((performance.now() - t0) / 1000).toFixed(1)} s).`);
}
// The year-of-use grid (30 simulations) and one evaluation of it; tests ask for it on its own.
if (config().seed.sweep || config().seed.yearSweep) {
	const t0 = performance.now();
	const { sweepId, evaluationId } = await seedDemoYearSweep(programId, userIds.engineer);
	console.log(`Year-of-use sweep ${sweepId} and evaluation ${evaluationId} ready (${((performance.now() - t0) / 1000).toFixed(1)} s).`);
}
console.log(`Demo program ${programId} ready. Sign in with any of these (password “${DEMO_PASSWORD}”):`);
for (const p of DEMO_PEOPLE) console.log(`  ${p.role.padEnd(9)} ${p.email}`);
await settleDigests(); // the demo sweep's digest is written after its last commit
await sequelize.close();
