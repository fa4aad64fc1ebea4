import { redirect } from '@sveltejs/kit';
import { secureCookies } from '$lib/server/config';
import { sitePath } from '$lib/server/http/safe-redirect';
import { parseTheme, THEME_COOKIE, THEME_COOKIE_MAX_AGE } from '$lib/theme';
import type { RequestHandler } from './$types';

/** The theme switch without scripts: store the choice and go back to the page it was made on. */
export const POST: RequestHandler = async ({ request, cookies }) => {
	const form = await request.formData().catch(() => new FormData());
	const theme = parseTheme(String(form.get('theme') ?? ''));
	cookies.set(THEME_COOKIE, theme, {
		path: '/',
		maxAge: THEME_COOKIE_MAX_AGE,
		httpOnly: false,
		sameSite: 'lax',
		secure: secureCookies()
	});
	const next = form.get('next');
	redirect(303, sitePath(typeof next === 'string' ? next : null));
};
