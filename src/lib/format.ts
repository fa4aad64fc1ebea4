/** Client-safe formatting helpers. */
export function formatDateTime(iso: string | null): string {
	if (!iso) return '—';
	return new Date(iso).toISOString().replace('T', ' ').slice(0, 16) + ' UTC';
}

/** A value with a fixed number of decimals and a true minus sign. */
export function fixed(value: number | null | undefined, digits = 3): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	return value.toFixed(digits).replace(/^-/, '−');
}

/** Decimals enough to show an uncertainty to two significant figures (common practice). */
export function decimalsFor(error: number): number {
	if (!(error > 0) || !Number.isFinite(error)) return 3;
	return Math.max(0, Math.min(6, 1 - Math.floor(Math.log10(error))));
}

/** "value ± error", rounded together. */
export function withError(value: number, error: number | null | undefined): string {
	if (error === null || error === undefined || !Number.isFinite(error)) return fixed(value, 3);
	const digits = decimalsFor(error);
	return `${fixed(value, digits)} ± ${error.toFixed(digits)}`;
}

export function shortDigest(digest: string): string {
	return digest.startsWith('sha256:') ? `sha256:${digest.slice(7, 19)}…` : digest;
}

export function utcDate(iso: string | null | undefined): string {
	return iso ? iso.slice(0, 10) : '—';
}
