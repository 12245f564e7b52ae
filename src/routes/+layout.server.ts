import type { LayoutServerLoad } from './$types';
import { navFor } from '$lib/nav';
import { ROLE_LABELS } from '$lib/roles';

// Shapes only what the shell shows; each page's own load checks its role again.
export const load = (async ({ locals }) => {
	// A half-signed-in session (two-step code still missing) gets the bare shell, like a visitor.
	const user = locals.secondFactor === 'pending' ? null : locals.user;
	return {
		user: user ? { name: user.name, email: user.email, role: user.role, roleLabel: ROLE_LABELS[user.role] } : null,
		nav: navFor(user?.role).map(({ href, label, match }) => ({ href, label, match: match ?? href }))
	};
}) satisfies LayoutServerLoad;
