import type { Handle } from '@sveltejs/kit';
import { parseTheme, THEME_COOKIE } from '$lib/theme';

/**
 * Writes the reader's theme into <html data-theme> while the page is rendered, so the first paint
 * already has the right colours (no flash of the other theme before scripts run).
 */
export const handleTheme: Handle = ({ event, resolve }) => {
	const theme = parseTheme(event.cookies.get(THEME_COOKIE));
	return resolve(event, {
		transformPageChunk: ({ html }) => html.replace('%candlebook.theme%', theme)
	});
};
