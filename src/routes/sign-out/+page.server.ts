import { redirect } from '@sveltejs/kit';
import { recordAudit } from '$lib/server/accounts/audit';
import { requireUser } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { appLucia } from '$lib/server/auth/request-lucia';
import { clearSessionCookie } from '$lib/server/auth/session';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ locals }) => ({ signedIn: locals.user !== null });

export const actions: Actions = {
	default: async (event) => {
		const user = requireUser();
		const lucia = await appLucia();
		if (event.locals.session) await lucia.invalidateSession(event.locals.session.id);
		clearSessionCookie(event.cookies, lucia);
		await recordAudit(event.locals.em, 'sign-out', { ...auditContext(event), subject: user.id });
		redirect(303, '/');
	}
};
