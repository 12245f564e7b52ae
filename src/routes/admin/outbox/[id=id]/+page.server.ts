import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ADMINS } from '$lib/roles';
import * as outbox from '$lib/server/accounts/outbox';

export const load = (async (event) => {
	requireRole(event, ADMINS);
	const id = Number(event.params.id);
	const message = Number.isSafeInteger(id) && id > 0 ? await outbox.get(db, id) : null;
	if (!message) error(404, { message: 'No such message in the outbox.' });
	const { htmlBody: _html, ...shown } = message;
	return { message: shown };
}) satisfies PageServerLoad;
