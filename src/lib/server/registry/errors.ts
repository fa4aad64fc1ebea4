import type { FieldError } from '../api/problem';

/**
 * A refusal from a registry service, with the HTTP status the API answers and a stable code. Services
 * know nothing of SvelteKit; routes turn this into problem+json.
 */
export type RegistryStatus = 400 | 401 | 403 | 404 | 409 | 413 | 415 | 422 | 503;

export class RegistryError extends Error {
	constructor(
		readonly status: RegistryStatus,
		readonly code: string,
		message: string,
		readonly errors: FieldError[] = [],
		/** More members of the problem body, e.g. the upload's `issues` with line, column, value and reason. */
		readonly extra: Record<string, unknown> = {}
	) {
		super(message);
		this.name = 'RegistryError';
	}
}

export const notFound = (what: string): RegistryError => new RegistryError(404, 'not-found', `There is no ${what}.`);
export const forbidden = (message: string): RegistryError => new RegistryError(403, 'forbidden', message);
export const invalid = (message: string, errors: FieldError[] = []): RegistryError =>
	new RegistryError(422, 'validation-failed', message, errors);
export const conflict = (code: string, message: string): RegistryError => new RegistryError(409, code, message);
