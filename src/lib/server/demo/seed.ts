/**
 * The demo scenario: an invented regional delivery-van program in a cold climate, invented
 * people for each role and the demo inputs. Idempotent: running it twice changes nothing.
 * Loaded only when asked for (`npm run seed`, or the README's demo command).
 */
import { ensureDb } from '../db/index';
import { Membership, Program, User } from '../db/models/index';
import { createUser, normaliseEmail } from '../auth/users';
import type { ProgramRole } from '../auth/roles';
import { ParameterSet } from '../db/models/index';
import { demoCells, demoPack, exampleScenario, celsiusToKelvin } from '../../engine/index';
import { validateInput } from '../inputs';

export const DEMO_PASSWORD = 'demo-paretherm-2026';
export const DEMO_PROGRAM = 'Northreach e-van · cold-climate fast charge (demo)';

export const DEMO_PEOPLE: { email: string; name: string; role: ProgramRole | 'admin' }[] = [
	{ email: 'admin@paretherm.test', name: 'Demo Administrator', role: 'admin' },
	{ email: 'engineer@paretherm.test', name: 'Tove Ridgeway', role: 'engineer' },
	{ email: 'architect@paretherm.test', name: 'Omar Castellane', role: 'architect' },
	{ email: 'manager@paretherm.test', name: 'Priya Halloran', role: 'manager' },
	{ email: 'viewer@paretherm.test', name: 'Lena Quist', role: 'viewer' }
];

export async function seedDemo(options: { withInputs?: (programId: number, userId: string) => Promise<void> } = {}) {
	await ensureDb();
	const [program] = await Program.findOrCreate({
		where: { name: DEMO_PROGRAM },
		defaults: {
			name: DEMO_PROGRAM,
			description:
				'Invented demo program: a regional delivery van charging at 150 kW and 350 kW depots, ambients from −20 °C to 35 °C, two candidate cells and one pack design.'
		}
	});
	const ids: Record<string, string> = {};
	for (const person of DEMO_PEOPLE) {
		let user = await User.findOne({ where: { email: normaliseEmail(person.email) } });
		user ??= await createUser({
			email: person.email,
			name: person.name,
			password: DEMO_PASSWORD,
			isAdmin: person.role === 'admin'
		});
		ids[person.role] = user.id;
		if (person.role !== 'admin') {
			await Membership.findOrCreate({
				where: { program_id: program.id, user_id: user.id },
				defaults: {
					program_id: program.id,
					user_id: user.id,
					role: person.role,
					digest_subscribed: person.role === 'manager'
				}
			});
		}
	}
	await seedInputs(program.id, ids.engineer);
	if (options.withInputs) await options.withInputs(program.id, ids.engineer);
	return { programId: program.id, userIds: ids };
}

/** Invented demo scenarios: depot-to-hub drives in a cold climate and one hot afternoon. */
export const DEMO_SCENARIOS = [
	{ slug: 'cold-morning-depot', data: exampleScenario },
	{
		slug: 'deep-cold-hub-run',
		data: {
			...exampleScenario,
			name: 'Deep-cold hub run, 350 kW',
			ambient_K: celsiusToKelvin(-20),
			arrivalSoc: 0.15,
			drive: { duration_s: 3600, profile: { kind: 'builtin', name: 'highway', averagePower_W: 32000 } },
			charger: { maxCurrent_A: 500, maxPower_W: 350000 }
		}
	},
	{
		slug: 'hot-afternoon-return',
		data: {
			...exampleScenario,
			name: 'Hot afternoon return',
			ambient_K: celsiusToKelvin(35),
			arrivalSoc: 0.25,
			drive: { duration_s: 1200, profile: { kind: 'builtin', name: 'urban', averagePower_W: 18000 } }
		}
	}
];

async function seedInputs(programId: number, userId: string) {
	const items = [
		...demoCells.map((c) => ({ kind: 'cell' as const, slug: c.id, name: c.name, data: c })),
		{ kind: 'pack' as const, slug: demoPack.id, name: demoPack.name, data: demoPack },
		...DEMO_SCENARIOS.map((s) => ({ kind: 'scenario' as const, slug: s.slug, name: String(s.data.name), data: s.data }))
	];
	for (const item of items) {
		const exists = await ParameterSet.findOne({ where: { program_id: programId, kind: item.kind, slug: item.slug } });
		if (exists) continue;
		await ParameterSet.create({
			program_id: programId,
			kind: item.kind,
			slug: item.slug,
			version: 1,
			name: item.name,
			data: JSON.stringify(validateInput(item.kind, item.data)),
			created_by: userId
		});
	}
}
