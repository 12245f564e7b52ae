/** Query and form parameters of the board (selection and quantities), validated with zod. */
import { z } from 'zod';
import { DomainError } from '$lib/server/errors';
import { isId } from '$lib/id';

const idText = z.string().refine(isId, 'A part id is a positive whole number.');
const qtyText = z.string().regex(/^\d{1,6}$/, 'A quantity is a whole number of units.');

/** `partId` (repeated) and `qty-<id>` from a query string or form; 400 on anything malformed. */
export function exportQuery(params: URLSearchParams | FormData): { partIds: number[]; quantities: Map<number, number> } {
	const ids = params.getAll('partId').map(String);
	if (!ids.length) throw new DomainError(400, 'invalid-input', 'Choose at least one part.', { partId: 'Choose at least one part.' });
	if (ids.length > 500) throw new DomainError(400, 'invalid-input', 'At most 500 parts at once.', { partId: 'At most 500 parts.' });
	const partIds: number[] = [];
	for (const id of ids) {
		const r = idText.safeParse(id);
		if (!r.success) throw new DomainError(400, 'invalid-input', r.error.issues[0].message, { partId: r.error.issues[0].message });
		partIds.push(Number(id));
	}
	const quantities = new Map<number, number>();
	for (const id of partIds) {
		const raw = params.get(`qty-${id}`);
		if (raw == null || raw === '') continue;
		const r = qtyText.safeParse(String(raw).trim());
		if (!r.success) throw new DomainError(400, 'invalid-input', r.error.issues[0].message, { [`qty-${id}`]: r.error.issues[0].message });
		quantities.set(id, Number(String(raw).trim()));
	}
	return { partIds: [...new Set(partIds)], quantities };
}
