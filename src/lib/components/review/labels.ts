/** Words and number formats the review screens share (client-safe). */
import type { ProposalState } from '$lib/review/proposal-workflow';

export const STATE_LABELS: Record<ProposalState, string> = {
	draft: 'draft',
	in_review: 'in review',
	changes_requested: 'changes requested',
	approved: 'approved',
	rejected: 'rejected',
	withdrawn: 'withdrawn'
};

export const COEFFICIENT_LABELS: Record<string, string> = {
	zero_point: 'zero point a (mag)',
	slope: 'slope b (mag/dex)',
	metallicity_term: 'metallicity term γ (mag/dex)',
	intrinsic_scatter: 'intrinsic scatter σ_int (mag)'
};

export const DECISION_LABELS: Record<string, string> = {
	approve: 'approved',
	request_changes: 'asked for changes',
	reject: 'rejected'
};

const MINUS = '\u2212';

/** A number with fixed decimals and a true minus sign; an em dash for a missing value. */
export function fixed(value: number | null | undefined, digits = 3): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	const text = Math.abs(value).toFixed(digits);
	return value < 0 && Number(text) !== 0 ? `${MINUS}${text}` : text;
}

/** A change, always signed (+0.012, −0.034). */
export function signed(value: number | null | undefined, digits = 3): string {
	if (value === null || value === undefined || !Number.isFinite(value)) return '—';
	const text = fixed(value, digits);
	return text.startsWith(MINUS) ? text : `+${text}`;
}

/** `path?k=v&…` for the given parameters, leaving out empty ones. */
export function withQuery(path: string, params: Record<string, string | number | null | undefined>): string {
	const query = new URLSearchParams();
	for (const [key, value] of Object.entries(params)) {
		if (value !== null && value !== undefined && value !== '') query.set(key, String(value));
	}
	const text = query.toString();
	return text ? `${path}?${text}` : path;
}
