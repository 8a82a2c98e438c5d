/*
 * Who may do what, in one place (DESIGN.md, "People and roles"). Every role may read
 * every capture session of its workspace; only the roles listed here may change things.
 * The server enforces these through `guard.ts`; pages use `can()` only to hide controls.
 */

export const ROLE_NAMES = ['admin', 'editor', 'reviewer', 'processor'] as const;
export type RoleName = (typeof ROLE_NAMES)[number];

export const PERMISSIONS = {
	'sessions:read': ['admin', 'editor', 'reviewer', 'processor'],
	'sessions:write': ['editor'],
	'clips:write': ['editor'],
	'alignment:run': ['editor'],
	'alignment:edit': ['editor'],
	'review:send': ['editor'],
	'review:check': ['reviewer'],
	'review:decide': ['reviewer'],
	'exports:create': ['processor'],
	'imports:browse': ['editor', 'admin'],
	'imports:manage': ['admin'],
	'people:manage': ['admin'],
	'tokens:manage': ['admin'],
	'outbox:read': ['admin']
} as const satisfies Record<string, readonly RoleName[]>;

export type Permission = keyof typeof PERMISSIONS;

export function can(role: RoleName | null | undefined, permission: Permission): boolean {
	if (!role) return false;
	return (PERMISSIONS[permission] as readonly RoleName[]).includes(role);
}

export const ROLE_LABELS: Record<RoleName, string> = {
	admin: 'Admin',
	editor: 'Editor',
	reviewer: 'Reviewer',
	processor: 'Processor'
};

export const ROLE_DESCRIPTIONS: Record<RoleName, string> = {
	admin: 'Invites people, sets roles, manages import folders and API tokens',
	editor: 'Creates capture sessions, brings in clips, aligns, nudges and marks the usable span',
	reviewer: 'Spot-checks offsets, approves or sends back with notes',
	processor: 'Exports timing tables and frame lists of approved sessions'
};
