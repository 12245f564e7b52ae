/** Browser helpers for datasheet uploads (the panel and the bulk page). */
export async function uploadDatasheet(partId: number, file: File): Promise<{ ok: true } | { ok: false; message: string }> {
	const body = new FormData();
	body.append('file', file, file.name);
	const res = await fetch(`/api/v1/parts/${partId}/datasheets`, { method: 'POST', body }).catch(() => null);
	if (!res) return { ok: false, message: 'The server could not be reached.' };
	if (res.ok) return { ok: true };
	const j = await res.json().catch(() => null);
	return { ok: false, message: j?.error?.message ?? `The upload failed (${res.status}).` };
}

export const formatBytes = (n: number) => (n < 1024 * 1024 ? `${Math.max(1, Math.round(n / 1024))} KB` : `${(n / (1024 * 1024)).toFixed(1)} MB`);
