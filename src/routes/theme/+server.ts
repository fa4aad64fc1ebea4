import { redirect } from '@sveltejs/kit';
import { parseTheme, THEME_COOKIE, THEME_COOKIE_MAX_AGE } from '$lib/theme';
import type { RequestHandler } from './$types';

/** The theme switch without scripts: store the choice and go back to the page it was made on. */
export const POST: RequestHandler = async ({ request, cookies }) => {
	const form = await request.formData().catch(() => new FormData());
	const theme = parseTheme(String(form.get('theme') ?? ''));
	cookies.set(THEME_COOKIE, theme, { path: '/', maxAge: THEME_COOKIE_MAX_AGE, httpOnly: false, sameSite: 'lax' });
	const next = String(form.get('next') ?? '/');
	// Only a path on this site: never an open redirect.
	redirect(303, next.startsWith('/') && !next.startsWith('//') ? next : '/');
};
