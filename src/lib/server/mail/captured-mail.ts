import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { isLoopbackHost } from '../config';

export interface CapturedMail {
	id: string;
	receivedAt: string;
	from: string;
	to: string[];
	subject: string;
	text: string;
}

/** The newest messages the local fake SMTP server captured into `dir` (newest first). */
export function readCapturedMail(dir: string, limit = 100): CapturedMail[] {
	let names: string[];
	try {
		names = readdirSync(dir).filter((name) => name.endsWith('.json'));
	} catch {
		return [];
	}
	return names
		.sort()
		.reverse()
		.slice(0, limit)
		.flatMap((name) => {
			try {
				return [JSON.parse(readFileSync(join(dir, name), 'utf8')) as CapturedMail];
			} catch {
				return [];
			}
		});
}

/**
 * The folder the captured-mail page reads, or null when the page is off: only while the local fake
 * SMTP server is in use (a capture folder, and mail going to a server on this machine).
 */
export function capturedMailDir(config: { SMTP_URL?: string; CANDLEBOOK_MAIL_CAPTURE_DIR?: string }): string | null {
	if (!config.SMTP_URL || !config.CANDLEBOOK_MAIL_CAPTURE_DIR) return null;
	return isLoopbackHost(new URL(config.SMTP_URL).hostname) ? config.CANDLEBOOK_MAIL_CAPTURE_DIR : null;
}

const LINK = /\bhttps?:\/\/\S+/gi;
export const WITHHELD_LINK = '[link withheld: only the addressee may follow it]';

/**
 * The message as someone other than its addressee may see it: every link (which may carry a one-time
 * token for an invitation, a reset or an address change) replaced by a notice.
 */
export function withLinksWithheld(mail: CapturedMail, viewerEmail: string): CapturedMail {
	const viewer = viewerEmail.toLowerCase();
	if (mail.to.some((address) => address.toLowerCase() === viewer)) return mail;
	return { ...mail, text: mail.text.replace(LINK, WITHHELD_LINK) };
}
