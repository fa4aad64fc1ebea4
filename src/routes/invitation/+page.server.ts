import { fail, redirect } from '@sveltejs/kit';
import { acceptInvitation, findUsableLink } from '$lib/server/accounts/account-service';
import { NewPasswordFormSchema } from '$lib/server/accounts/password-form';
import { auditContext } from '$lib/server/auth/request-context';
import { formErrors, textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	const token = url.searchParams.get('token') ?? '';
	const link = await findUsableLink(locals.em, token, 'invitation');
	return link
		? { valid: true as const, token, email: link.email, displayName: link.user.displayName }
		: { valid: false as const };
};

export const actions: Actions = {
	default: async (event) => {
		const parsed = NewPasswordFormSchema.safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { errors: formErrors(parsed.error), expired: false });
		const user = await acceptInvitation(event.locals.em, parsed.data.token, parsed.data.password, auditContext(event));
		if (!user) return fail(400, { errors: {}, expired: true });
		redirect(303, '/sign-in?notice=welcome');
	}
};
