import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { checkPassword } from '$lib/server/accounts/account-service';
import { appLucia } from '$lib/server/auth/request-lucia';
import { clientAddress, safeNext } from '$lib/server/auth/request-context';
import { setSessionCookie, startSession } from '$lib/server/auth/session';
import { formErrors, textFields, type FormErrors } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const SignInSchema = z.object({
	email: z.string().trim().min(1, 'Enter your e-mail address.').max(320),
	password: z.string().min(1, 'Enter your password.').max(256),
	next: z.string().optional()
});

const NOTICES: Record<string, string> = {
	welcome: 'Your password is set. Sign in to continue.',
	reset: 'Your new password is set. Every session has ended and your API tokens are revoked: sign in again.',
	email: 'Your new address is confirmed. Sign in with it.'
};

export const load: PageServerLoad = ({ locals, url }) => {
	const next = safeNext(url.searchParams.get('next'));
	if (locals.user) redirect(303, next);
	return { next, notice: NOTICES[url.searchParams.get('notice') ?? ''] ?? null };
};

export const actions: Actions = {
	default: async (event) => {
		const fields = textFields(await event.request.formData());
		const parsed = SignInSchema.safeParse(fields);
		const values = { email: fields.email ?? '', next: safeNext(fields.next) };
		if (!parsed.success) return fail(400, { values, errors: formErrors(parsed.error), message: null });

		const address = clientAddress(event);
		const result = await checkPassword(event.locals.em, parsed.data.email, parsed.data.password, address);
		if (!result.ok) {
			const message =
				result.reason === 'throttled' ? result.message : 'That e-mail address and password do not match an account.';
			return fail(result.reason === 'throttled' ? 429 : 400, { values, errors: {} as FormErrors, message });
		}
		const lucia = await appLucia();
		const { token, session } = await startSession(lucia, result.user.id, {
			userAgent: event.request.headers.get('user-agent'),
			clientAddress: address
		});
		setSessionCookie(event.cookies, lucia, token, session.expiresAt);
		redirect(303, values.next);
	}
};
