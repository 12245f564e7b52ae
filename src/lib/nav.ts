import type { Role } from '$lib/server/db/schema';

export interface NavItem {
	href: string;
	label: string;
	roles: readonly Role[];
	/** Path prefix that marks the entry as current (defaults to href). */
	match?: string;
}

const ALL: readonly Role[] = ['admin', 'stockroom', 'engineer', 'purchaser'];

/**
 * The main navigation. Add an entry here when its page exists; the layout shows each role only
 * what it may use (the server checks again on every request).
 */
export const NAV: NavItem[] = [
	{ href: '/', label: 'Overview', roles: ALL },
	{ href: '/parts', label: 'Catalogue', roles: ALL },
	{ href: '/stock', label: 'Stock', roles: ALL },
	{ href: '/locations', label: 'Locations', roles: ALL },
	{ href: '/build', label: 'Build from stock', roles: ['admin', 'stockroom', 'engineer'] },
	{ href: '/imports', label: 'Imports', roles: ['admin', 'stockroom'] },
	{ href: '/reorder', label: 'Reorder board', roles: ['admin', 'purchaser'] },
	{ href: '/requests', label: 'Requests', roles: ['admin', 'purchaser', 'stockroom'] },
	{ href: '/admin/users', label: 'Admin', roles: ['admin'], match: '/admin' }
];

/** The admin pages, shown as tabs on every /admin page. */
export const ADMIN_NAV: NavItem[] = [
	{ href: '/admin/users', label: 'Users', roles: ['admin'] },
	{ href: '/admin/outbox', label: 'Outbox', roles: ['admin'] },
	{ href: '/admin/settings', label: 'Lab settings', roles: ['admin'] },
	{ href: '/admin/materials', label: 'Materials', roles: ['admin'] }
];

export function navFor(role: Role | undefined): NavItem[] {
	return role ? NAV.filter((item) => item.roles.includes(role)) : [];
}
