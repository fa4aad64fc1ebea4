/** Client-safe formatting helpers. */
export function formatDateTime(iso: string | null): string {
	if (!iso) return '—';
	return new Date(iso).toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
}
