import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { db } from '$lib/server/db';
import { endpoint, readJson } from '$lib/server/api/http';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE } from '$lib/roles';
import * as unlock from '$lib/server/purchasing/unlock-search';

/**
 * Which single purchase would give the best setup: `{setupId}` for a saved setup, or
 * `{question}` with a Build from stock question (searched over the whole catalogue).
 */
export const POST = endpoint(async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const body = unlock.unlockInputSchema.parse(await readJson(event.request));
	const signal = event.request.signal;
	return json('setupId' in body ? await unlock.unlockForSetup(db, body.setupId, user, signal) : await unlock.unlockForQuestion(db, body.question, user, signal));
}) satisfies RequestHandler;
