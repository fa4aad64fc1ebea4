import { error, fail, type ActionFailure } from '@sveltejs/kit';
import { z } from 'zod';
import { RegistryError } from '../registry/errors';

/** Glue between page form actions and the registry services: refusals become messages on the page. */

export interface CommandFailure {
	action: string;
	message: string;
	errors: Record<string, string[]>;
	values: Record<string, string>;
}

export async function pageCommand(
	action: string,
	values: Record<string, string>,
	work: () => Promise<void>
): Promise<ActionFailure<CommandFailure> | undefined> {
	try {
		await work();
		return undefined;
	} catch (cause) {
		if (!(cause instanceof RegistryError)) throw cause;
		if (cause.status === 404) error(404, cause.message);
		const errors: Record<string, string[]> = {};
		for (const item of cause.errors) (errors[item.path] ??= []).push(item.message);
		return fail(cause.status, { action, message: cause.message, errors, values });
	}
}

export function invalidForm(
	action: string,
	values: Record<string, string>,
	zodError: z.ZodError
): ActionFailure<CommandFailure> {
	const errors: Record<string, string[]> = {};
	for (const issue of zodError.issues) (errors[String(issue.path[0] ?? 'form')] ??= []).push(issue.message);
	return fail(400, { action, message: 'Please correct the form.', errors, values });
}

/** A Markdown comment: optional for an approval, required to ask for changes or to reject. */
export const optionalComment = z.string().trim().max(50_000, 'Keep a comment under 50,000 characters.');
export const requiredComment = optionalComment.min(1, 'Say what should change, or why: a comment is required.');
