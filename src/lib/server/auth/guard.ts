/**
 * The one guard every form action, page load and `+server.ts` handler calls for itself.
 * 401 when nobody is signed in, 404 for a program that does not exist (or an id that is not a
 * number), 403 when the caller's role lacks the capability. Members of other programs get 404
 * too, so guessing ids reveals nothing.
 */
import { error } from '@sveltejs/kit';
import { Membership, Program } from '../db/models/index';
import type { AuthUser } from './lucia';
import { roleCan, ROLE_LABELS, type Capability, type ProgramRole } from './roles';

type LocalsLike = { user: AuthUser | null };

export function requireUser(locals: LocalsLike): AuthUser {
	if (!locals.user) error(401, 'Sign in to continue.');
	return locals.user;
}

export function requireAdmin(locals: LocalsLike): AuthUser {
	const user = requireUser(locals);
	if (!user.isAdmin) error(403, 'Only administrators may manage users and programs.');
	return user;
}

export function parseId(raw: string | undefined, what: string): number {
	if (!raw || !/^[1-9][0-9]{0,9}$/.test(raw)) error(404, `No ${what} with id “${String(raw).slice(0, 40)}”.`);
	return Number(raw);
}

const NEED_WORDS: Record<Capability, string> = {
	read: 'read this program',
	edit: 'change inputs or queue sweeps (thermal engineers do)',
	decide: 'endorse or decline strategies (pack architects and program managers do)',
	comment: 'comment'
};

export async function requireProgramRole(
	locals: LocalsLike,
	programId: number | string,
	need: Capability
): Promise<{ user: AuthUser; program: Program; role: ProgramRole | 'admin' }> {
	const user = requireUser(locals);
	const id = typeof programId === 'number' ? programId : parseId(programId, 'program');
	const program = await Program.findByPk(id);
	if (!program) error(404, `No program with id ${id}.`);
	if (user.isAdmin) return { user, program, role: 'admin' };
	const membership = await Membership.findOne({ where: { program_id: id, user_id: user.id } });
	if (!membership) error(404, `No program with id ${id}.`);
	if (!roleCan(membership.role, need))
		error(403, `As ${ROLE_LABELS[membership.role].toLowerCase()} you cannot ${NEED_WORDS[need]}.`);
	return { user, program, role: membership.role };
}

/** Programs the user may read, with their role in each. */
export async function programsFor(user: AuthUser): Promise<{ id: number; name: string; role: ProgramRole | 'admin' }[]> {
	if (user.isAdmin) {
		const all = await Program.findAll({ order: [['name', 'ASC']] });
		return all.map((p) => ({ id: p.id, name: p.name, role: 'admin' as const }));
	}
	const memberships = await Membership.findAll({ where: { user_id: user.id } });
	const programs = await Program.findAll({
		where: { id: memberships.map((m) => m.program_id) },
		order: [['name', 'ASC']]
	});
	return programs.map((p) => ({
		id: p.id,
		name: p.name,
		role: memberships.find((m) => m.program_id === p.id)!.role
	}));
}
