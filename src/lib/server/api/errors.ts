import { error } from '@sveltejs/kit';
import type { ZodError } from 'zod';
import type { FieldError } from './problem';

/** Turns zod issues into the `errors` list of a validation problem. */
export function fieldErrors(zodError: ZodError): FieldError[] {
	return zodError.issues.map((issue) => ({
		path: issue.path.map(String).join('/'),
		message: issue.message
	}));
}

/**
 * Throws an HTTP error whose body carries problem fields; the API hook renders it as problem+json.
 */
export function fail(status: number, detail: string, errors?: FieldError[]): never {
	error(status, { message: detail, ...(errors ? { errors } : {}) });
}
