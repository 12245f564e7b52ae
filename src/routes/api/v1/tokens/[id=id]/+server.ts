import { z } from 'zod';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint } from '$lib/server/api/http';
import { hasAdminFactor, requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import * as apiTokens from '$lib/server/accounts/api-tokens';

const params = z.object({ id: z.coerce.number().int().positive() });

/** Revokes one of the user's tokens (an administrator with two-step sign-in: anyone's); 404 for a token that is not yours. */
export const DELETE = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const { id } = params.parse(event.params);
	await apiTokens.revoke(db, { id: user.id, isAdmin: hasAdminFactor(event) }, id);
	return new Response(null, { status: 204 });
}) satisfies RequestHandler;
