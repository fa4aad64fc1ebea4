import { parseTheme, THEME_COOKIE } from '$lib/theme';
import type { LayoutServerLoad } from './$types';

/** Only what the header needs; no database work. */
export const load: LayoutServerLoad = ({ locals, cookies }) => ({
	viewer: locals.user ? { displayName: locals.user.displayName, isAdmin: locals.user.roles.includes('admin') } : null,
	theme: parseTheme(cookies.get(THEME_COOKIE))
});
