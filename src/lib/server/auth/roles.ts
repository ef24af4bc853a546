/**
 * Roles. `admin` is global (a flag on the user); the others are held per program.
 * What each may do is written once here and enforced by `guard.ts`.
 */
export const PROGRAM_ROLES = ['engineer', 'architect', 'manager', 'viewer'] as const;
export type ProgramRole = (typeof PROGRAM_ROLES)[number];

export const ROLE_LABELS: Record<ProgramRole, string> = {
	engineer: 'Thermal engineer',
	architect: 'Pack architect',
	manager: 'Program manager',
	viewer: 'Viewer'
};

/** read: see inputs and results · edit: change inputs, queue and cancel sweeps, propose strategies ·
 * decide: endorse or decline strategies (pack architects and program managers) · comment: write in strategy threads. */
export type Capability = 'read' | 'edit' | 'decide' | 'comment';

const CAPABILITIES: Record<ProgramRole, readonly Capability[]> = {
	engineer: ['read', 'edit', 'comment'],
	architect: ['read', 'decide', 'comment'],
	manager: ['read', 'decide', 'comment'],
	viewer: ['read']
};

export function roleCan(role: ProgramRole, need: Capability): boolean {
	return CAPABILITIES[role].includes(need);
}

export function isProgramRole(value: unknown): value is ProgramRole {
	return typeof value === 'string' && (PROGRAM_ROLES as readonly string[]).includes(value);
}
