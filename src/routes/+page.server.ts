import type { PageServerLoad } from './$types';
import { db } from '$lib/server/db';
import { requireRole } from '$lib/server/auth/guard';
import { ANY_ROLE, OVERVIEW_SECTIONS } from '$lib/roles';
import { quarantineParts, stockSummary } from '$lib/server/overview/summary';
import { flaggedParts } from '$lib/server/purchasing/flags';
import { listRequests } from '$lib/server/purchasing/requests';
import { OPEN, STATUS_LABELS } from '$lib/server/purchasing/states';
import { listImports } from '$lib/server/imports/service';
import { listSavedSetups } from '$lib/server/solver/setup-list';

/** How many rows each overview list shows. */
const SHORT_LIST = 5;

/** What the purchaser needs first: how many parts are flagged, the open requests. */
async function purchasing() {
	const [flagged, open] = await Promise.all([flaggedParts(db), listRequests(db, { statuses: OPEN })]);
	return {
		flagged: flagged.length,
		openRequests: open.length,
		// listRequests stops at 500 rows: say "500 or more" rather than a wrong exact number.
		openRequestsCapped: open.length >= 500,
		requests: open
			.slice(0, SHORT_LIST)
			.map((r) => ({ id: r.id, sku: r.sku, quantity: r.quantity, status: STATUS_LABELS[r.status], updatedAt: r.updatedAt }))
	};
}

/** What the stockroom needs first: the latest imports, the parts with units waiting in quarantine. */
async function stockroom() {
	const [imports, quarantine] = await Promise.all([listImports(db, { pageSize: SHORT_LIST }), quarantineParts(db, SHORT_LIST)]);
	return {
		imports: imports.items.map((i) => ({ id: i.id, filename: i.filename, status: i.status, interrupted: i.interrupted, createdAt: i.createdAt })),
		quarantine
	};
}

/** The engineer's own saved setups, newest first. */
async function setups(userId: number) {
	const { items, total } = await listSavedSetups(db, { userId, mineOnly: true, limit: SHORT_LIST });
	return { total, items: items.map((s) => ({ id: s.id, name: s.name, createdAt: s.createdAt, skus: s.skus, reserved: s.reserved !== null })) };
}

export const load = (async (event) => {
	const user = requireRole(event, ANY_ROLE);
	const wants = OVERVIEW_SECTIONS[user.role];
	const [summary, purchase, stock, saved] = await Promise.all([
		stockSummary(db),
		wants.includes('purchasing') ? purchasing() : null,
		wants.includes('stockroom') ? stockroom() : null,
		wants.includes('setups') ? setups(user.id) : null
	]);
	return { summary, role: user.role, purchasing: purchase, stockroom: stock, setups: saved };
}) satisfies PageServerLoad;
