import { json } from '@sveltejs/kit';

/**
 * RFC 9457 problem details. `type` URIs are stable and relative to the deployment, so they resolve to
 * the problem's documentation on whichever host serves the API.
 */
export const PROBLEM_CONTENT_TYPE = 'application/problem+json';

export const PROBLEM_TYPES = {
	400: 'bad-request',
	401: 'unauthenticated',
	403: 'forbidden',
	404: 'not-found',
	405: 'method-not-allowed',
	409: 'conflict',
	413: 'payload-too-large',
	415: 'unsupported-media-type',
	422: 'validation-failed',
	429: 'too-many-requests',
	500: 'internal-error',
	503: 'unavailable'
} as const satisfies Record<number, string>;

export type ProblemStatus = keyof typeof PROBLEM_TYPES;

export interface FieldError {
	/** JSON pointer-like path into the request, e.g. `stars/3/period_days`. */
	path: string;
	message: string;
}

export interface Problem {
	type: string;
	title: string;
	status: number;
	detail?: string;
	instance?: string;
	errors?: FieldError[];
}

const TITLES: Record<number, string> = {
	400: 'Bad request',
	401: 'Authentication required',
	403: 'Not allowed',
	404: 'Not found',
	405: 'Method not allowed',
	409: 'Conflict',
	413: 'Payload too large',
	415: 'Unsupported media type',
	422: 'Validation failed',
	429: 'Too many requests',
	500: 'Internal error',
	503: 'Service unavailable'
};

export function problemType(status: number): string {
	const slug = (PROBLEM_TYPES as Record<number, string>)[status] ?? (status >= 500 ? 'internal-error' : 'bad-request');
	return `/docs/problems#${slug}`;
}

export function problemBody(status: number, detail?: string, extra: Partial<Problem> = {}): Problem {
	return {
		type: problemType(status),
		title: TITLES[status] ?? 'Error',
		status,
		...(detail === undefined ? {} : { detail }),
		...extra
	};
}

/** A problem+json response. */
export function problem(
	status: number,
	detail?: string,
	extra: Partial<Problem> = {},
	headers: HeadersInit = {}
): Response {
	return json(problemBody(status, detail, extra), {
		status,
		headers: { ...Object.fromEntries(new Headers(headers)), 'content-type': PROBLEM_CONTENT_TYPE }
	});
}
