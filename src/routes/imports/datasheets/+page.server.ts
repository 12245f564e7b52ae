import type { PageServerLoad } from './$types';
import { requireRole } from '$lib/server/auth/guard';
import { STOCK_EDITORS } from '$lib/roles';
import { MAX_IMAGE_BYTES, MAX_PDF_BYTES } from '$lib/server/files/magic';

export const load = (async (event) => {
	requireRole(event, STOCK_EDITORS);
	return { maxPdfMb: MAX_PDF_BYTES / (1024 * 1024), maxImageMb: MAX_IMAGE_BYTES / (1024 * 1024) };
}) satisfies PageServerLoad;
