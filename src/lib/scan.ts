/**
 * What a scanned label points at (issue 16): only our own labels are followed. A code must be an
 * address on this app's origin whose path is a drawer (`/stock?locationId=<id>`) or a part
 * (`/parts/<id>`); anything else (another site, a different path) is refused, so a planted code
 * cannot send the phone elsewhere.
 */
import { isId } from '$lib/id';

export type ScanTarget = { kind: 'part'; id: number; path: string } | { kind: 'drawer'; id: number; path: string };

export function labelTarget(text: string, origin: string): ScanTarget | null {
	let u: URL;
	try {
		u = new URL(text.trim());
	} catch {
		return null;
	}
	if (u.origin !== new URL(origin).origin) return null;
	const part = /^\/parts\/([^/]+)$/.exec(u.pathname);
	if (part && isId(part[1])) return { kind: 'part', id: Number(part[1]), path: `/parts/${part[1]}` };
	const loc = u.searchParams.get('locationId');
	if (u.pathname === '/stock' && isId(loc)) return { kind: 'drawer', id: Number(loc), path: `/stock?locationId=${loc}` };
	return null;
}

/** The part page with one stock operation's form open (receive, issue or move). */
export const partWithOp = (id: number, op: 'receive' | 'issue' | 'move') => `/parts/${id}?op=${op}#stock`;
