import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { AccountError, confirmEmailChange, findUsableLink } from '$lib/server/accounts/account-service';
import { auditContext } from '$lib/server/auth/request-context';
import { textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

// The change happens on POST: mail scanners fetch links with GET.
export const load: PageServerLoad = async ({ locals, url }) => {
	const token = url.searchParams.get('token') ?? '';
	const link = await findUsableLink(locals.em, token, 'email-change');
	return link ? { valid: true as const, token, email: link.email } : { valid: false as const };
};

export const actions: Actions = {
	default: async (event) => {
		const parsed = z.object({ token: z.string().min(1).max(64) }).safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { message: 'The link is incomplete.' });
		try {
			const email = await confirmEmailChange(event.locals.em, parsed.data.token, auditContext(event));
			if (!email) return fail(400, { message: 'This link has been used or has expired.' });
		} catch (error) {
			if (error instanceof AccountError) return fail(409, { message: error.message });
			throw error;
		}
		redirect(303, event.locals.user ? '/account?notice=email' : '/sign-in?notice=email');
	}
};
