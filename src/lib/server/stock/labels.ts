/**
 * QR labels for drawers and parts (issue 16). Each code holds the full address of the page it opens
 * (built from ORIGIN, never from the request's Host): a drawer's stock view or a part's page. The scan
 * page reads them back with `labelTarget`.
 */
import QRCode from 'qrcode';
import { inArray } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { locations, parts } from '$lib/server/db/schema';

export const MAX_LABELS = 120;

export interface Label {
	kind: 'drawer' | 'part';
	id: number;
	/** Big text: the drawer code or the SKU. */
	code: string;
	/** Small text: the drawer's or the part's name. */
	name: string;
	url: string;
	/** PNG data: URL of the QR code. */
	qr: string;
}

/** The page a label opens. */
export const labelPath = (kind: Label['kind'], id: number) => (kind === 'drawer' ? `/stock?locationId=${id}` : `/parts/${id}`);

/** Labels for the chosen drawers (ids) and parts (ids or SKUs), drawers first, each in code order. */
export async function makeLabels(db: DbOrTx, origin: string, chosen: { locationIds: number[]; partIds: number[]; skus: string[] }): Promise<{ labels: Label[]; unknownSkus: string[] }> {
	const locs = chosen.locationIds.length ? await db.select().from(locations).where(inArray(locations.id, chosen.locationIds)).orderBy(locations.code) : [];
	const byId = chosen.partIds.length ? await db.select({ id: parts.id, sku: parts.sku, name: parts.name }).from(parts).where(inArray(parts.id, chosen.partIds)) : [];
	const bySku = chosen.skus.length ? await db.select({ id: parts.id, sku: parts.sku, name: parts.name }).from(parts).where(inArray(parts.sku, chosen.skus)) : [];
	const found = new Set(bySku.map((p) => p.sku.toLowerCase()));
	const unknownSkus = chosen.skus.filter((s) => !found.has(s.toLowerCase()));
	const ps = [...new Map([...byId, ...bySku].map((p) => [p.id, p])).values()].sort((a, b) => a.sku.localeCompare(b.sku));
	const items = [
		...locs.map((l) => ({ kind: 'drawer' as const, id: l.id, code: l.code, name: l.name })),
		...ps.map((p) => ({ kind: 'part' as const, id: p.id, code: p.sku, name: p.name }))
	].slice(0, MAX_LABELS);
	const labels = await Promise.all(
		items.map(async (it) => {
			const url = `${origin}${labelPath(it.kind, it.id)}`;
			const qr = await QRCode.toDataURL(url, { type: 'image/png', errorCorrectionLevel: 'M', margin: 1, width: 240 });
			return { ...it, url, qr };
		})
	);
	return { labels, unknownSkus };
}
