import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

export interface CapturedMessage {
	to: string[];
	subject: string;
	text: string;
}

/** Every message the local fake SMTP server captured to an address, newest first. */
export function capturedMailsTo(address: string): CapturedMessage[] {
	const dir = process.env.CANDLEBOOK_MAIL_CAPTURE_DIR;
	if (!dir) throw new Error('CANDLEBOOK_MAIL_CAPTURE_DIR is not set: run browser tests through `npm test`');
	return readdirSync(dir)
		.sort()
		.reverse()
		.map((name) => JSON.parse(readFileSync(join(dir, name), 'utf8')) as CapturedMessage)
		.filter((mail) => mail.to.includes(address));
}

/** The newest captured message to an address, waiting up to five seconds for it to arrive. */
export async function capturedMailTo(address: string): Promise<CapturedMessage> {
	for (let attempt = 0; attempt < 50; attempt++) {
		const [found] = capturedMailsTo(address);
		if (found) return found;
		await new Promise((resolve) => setTimeout(resolve, 100));
	}
	throw new Error(`no mail to ${address}`);
}
