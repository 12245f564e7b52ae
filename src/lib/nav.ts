import { ADMINS, ANY_ROLE, PURCHASERS, REQUEST_VIEWERS, SOLVER_USERS, STOCK_EDITORS, type Role } from './roles';

export interface NavItem {
	href: string;
	label: string;
	roles: readonly Role[];
	/** Path prefix that marks the entry as current (defaults to href). */
	match?: string;
}

/**
 * The main navigation. Add an entry here when its page exists; the layout shows each role only
 * what it may use (the server checks again on every request).
 */
export const NAV: NavItem[] = [
	{ href: '/', label: 'Overview', roles: ANY_ROLE },
	{ href: '/parts', label: 'Catalogue', roles: ANY_ROLE },
	{ href: '/stock', label: 'Stock', roles: ANY_ROLE },
	{ href: '/locations', label: 'Locations', roles: ANY_ROLE },
	{ href: '/build', label: 'Build from stock', roles: SOLVER_USERS },
	{ href: '/imports', label: 'Imports', roles: STOCK_EDITORS },
	{ href: '/reorder', label: 'Reorder board', roles: PURCHASERS },
	{ href: '/requests', label: 'Requests', roles: REQUEST_VIEWERS },
	{ href: '/admin/users', label: 'Admin', roles: ADMINS, match: '/admin' }
];

/** The admin pages, shown as tabs on every /admin page. */
export const ADMIN_NAV: NavItem[] = [
	{ href: '/admin/users', label: 'Users', roles: ADMINS },
	{ href: '/admin/outbox', label: 'Outbox', roles: ADMINS },
	{ href: '/admin/settings', label: 'Lab settings', roles: ADMINS },
	{ href: '/admin/materials', label: 'Materials', roles: ADMINS }
];

export function navFor(role: Role | undefined): NavItem[] {
	return role ? NAV.filter((item) => item.roles.includes(role)) : [];
}
