import type { RequestEvent } from '@sveltejs/kit';
import type { z } from 'zod';
import { AnalyseRequestSchema, type AnalyseRequest } from '../api/light-curve-schemas';
import { parseJsonBytes, readBodyWithLimit } from '../api/request-body';
import { getConfig } from '../config';
import { RegistryError } from '../registry/errors';
import { BatchRefusedError } from './analysis';

/** `['series', 3, 'points', 17, 1]` → `series[3].points[17][1]`, the way a client indexes its own request. */
export function requestPath(path: readonly PropertyKey[]): string {
	return path
		.map((part, i) => (typeof part === 'number' ? `[${part}]` : `${i === 0 ? '' : '.'}${String(part)}`))
		.join('');
}

export function fieldErrorsOf(error: z.ZodError) {
	return error.issues.map((issue) => ({ path: requestPath(issue.path) || '(body)', message: issue.message }));
}

/** Reads and validates an analyse request: 415, 413, 400 (not JSON), 422 with `series[i]…` paths. */
export async function readAnalyseRequest(event: RequestEvent): Promise<AnalyseRequest> {
	const type = event.request.headers.get('content-type') ?? '';
	if (!/^application\/([a-z.+-]*\+)?json\b/i.test(type)) {
		throw new RegistryError(415, 'unsupported-media-type', 'Send the light curves as application/json.');
	}
	const value = parseJsonBytes(await readBodyWithLimit(event.request, getConfig().CANDLEBOOK_MAX_JSON_BYTES));
	const parsed = AnalyseRequestSchema.safeParse(value);
	if (!parsed.success) {
		const errors = fieldErrorsOf(parsed.error);
		throw new RegistryError(
			422,
			'validation-failed',
			`The light curves were not analysed: ${errors.length} problem${errors.length === 1 ? '' : 's'}.`,
			errors.slice(0, 200)
		);
	}
	return parsed.data;
}

export function batchRefusal(error: BatchRefusedError): RegistryError {
	return new RegistryError(
		422,
		'light-curves-refused',
		'The engine refused the light curves.',
		error.issues.map((issue) => ({
			path: `${issue.index === null ? '' : `series[${issue.index}].`}${issue.field}`,
			message: issue.message
		}))
	);
}
