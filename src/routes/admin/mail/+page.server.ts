import { error } from '@sveltejs/kit';
import { dev } from '$app/environment';
import { requireRole } from '$lib/server/auth/guards';
import { getConfig } from '$lib/server/config';
import { capturedMailDir, readCapturedMail, withLinksWithheld } from '$lib/server/mail/captured-mail';
import type { PageServerLoad } from './$types';

/**
 * Mail the local fake SMTP server caught, for trying Candlebook on one machine. Off (404) whenever mail
 * really leaves; outside development, links in someone else's mail are withheld even from an admin.
 */
export const load: PageServerLoad = () => {
	const admin = requireRole('admin');
	const dir = capturedMailDir(getConfig());
	if (!dir) error(404, 'Not found');
	const messages = readCapturedMail(dir);
	return { messages: dev ? messages : messages.map((mail) => withLinksWithheld(mail, admin.email)) };
};
