/** Fixed-point text for a result, or an en dash where there is no finite number. */
export function formatFixed(value: number | null | undefined, digits: number): string {
	return typeof value === 'number' && Number.isFinite(value) ? value.toFixed(digits) : '–';
}

/** A fraction as a percentage with one decimal. */
export function formatPercent(fraction: number): string {
	return `${(fraction * 100).toFixed(1)}%`;
}
