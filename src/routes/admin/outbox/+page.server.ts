import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS } from '$lib/roles';
import * as outbox from '$lib/server/accounts/outbox';

export const load = (async (event) => {
	requireRole(event, ADMINS);
	const rows = await outbox.list(db, { limit: 200 });
	return { messages: rows.map(({ text: _text, ...m }) => m) };
}) satisfies PageServerLoad;
