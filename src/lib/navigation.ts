import { can, type Permission, type RoleName } from './permissions';

export interface NavItem {
	href: string;
	label: string;
	permission: Permission;
	section: 'work' | 'admin';
}

/** What the shell offers; each entry shows only to roles holding its permission. */
export const NAV_ITEMS: NavItem[] = [
	{ href: '/sessions', label: 'Capture sessions', permission: 'sessions:read', section: 'work' },
	{ href: '/admin/people', label: 'People', permission: 'people:manage', section: 'admin' },
	{ href: '/admin/tokens', label: 'API tokens', permission: 'tokens:manage', section: 'admin' },
	{ href: '/admin/imports', label: 'Import folders', permission: 'imports:manage', section: 'admin' },
	{ href: '/admin/outbox', label: 'Outbox', permission: 'outbox:read', section: 'admin' }
];

export function navFor(role: RoleName | null): NavItem[] {
	return NAV_ITEMS.filter((item) => can(role, item.permission));
}
