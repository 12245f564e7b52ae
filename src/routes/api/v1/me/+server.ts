import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { endpoint } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';

/** Who is signed in, and how. */
export const GET = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	return json({ user: { id: user.id, email: user.email, name: user.name, role: user.role }, authVia: event.locals.authVia });
}) satisfies RequestHandler;
