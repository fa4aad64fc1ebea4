import type { z } from 'zod';

/** Field messages keyed by the first path segment, for `fail(400, { errors })`. */
export type FormErrors = Record<string, string[]>;

export function formErrors(error: z.ZodError): FormErrors {
	const errors: FormErrors = {};
	for (const issue of error.issues) {
		const key = String(issue.path[0] ?? 'form');
		(errors[key] ??= []).push(issue.message);
	}
	return errors;
}

/** Single-valued fields as strings (files and repeated keys are not expected here). */
export function textFields(data: FormData): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const [key, value] of data) if (typeof value === 'string' && !(key in fields)) fields[key] = value;
	return fields;
}
