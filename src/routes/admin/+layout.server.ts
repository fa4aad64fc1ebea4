import { getConfig } from '$lib/server/config';
import { capturedMailDir } from '$lib/server/mail/captured-mail';
import type { LayoutServerLoad } from './$types';

/** The captured-mail section exists only while the local fake SMTP server is in use. */
export const load: LayoutServerLoad = () => ({ mailCaptured: capturedMailDir(getConfig()) !== null });
