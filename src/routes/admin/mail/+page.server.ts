import { requireRole } from '$lib/server/auth/guards';
import { getConfig } from '$lib/server/config';
import { readCapturedMail } from '$lib/server/mail/captured-mail';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = () => {
	requireRole('admin');
	const dir = getConfig().CANDLEBOOK_MAIL_CAPTURE_DIR;
	return { capturing: !!dir, messages: dir ? readCapturedMail(dir) : [] };
};
