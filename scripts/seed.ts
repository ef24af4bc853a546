/** `npm run seed`: loads the invented demo program (idempotent). */
import { seedDemo, DEMO_PASSWORD, DEMO_PEOPLE } from '../src/lib/server/demo/seed';
import { sequelize } from '../src/lib/server/db/index';

const { programId } = await seedDemo();
console.log(`Demo program ${programId} ready. Sign in with any of these (password “${DEMO_PASSWORD}”):`);
for (const p of DEMO_PEOPLE) console.log(`  ${p.role.padEnd(9)} ${p.email}`);
await sequelize.close();
