import { json, type RequestEvent } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { readJson } from '$lib/server/api/http';
import type { SignedInUser } from '$lib/server/auth/guard';
import { OPERATIONS, type OperationName } from './operations';

/** Runs one stock operation from a JSON body; 201 with the movement written to the ledger. */
export async function runOperation(name: OperationName, event: RequestEvent, user: SignedInUser) {
	const movement = await OPERATIONS[name](db, await readJson(event.request), { id: user.id });
	return json(movement, { status: 201 });
}
