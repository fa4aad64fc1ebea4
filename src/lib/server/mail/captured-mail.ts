import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

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
