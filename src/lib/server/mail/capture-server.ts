import { mkdirSync, writeFileSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import type { CapturedMail } from './captured-mail';

export interface MailCatcher {
	/** smtp://127.0.0.1:PORT, for SMTP_URL. */
	url: string;
	port: number;
	messages: CapturedMail[];
	/** Resolves with the first message (already received or still to come) that matches. */
	waitFor: (match: (mail: CapturedMail) => boolean, timeoutMs?: number) => Promise<CapturedMail>;
	close: () => Promise<void>;
}

/**
 * A fake SMTP server on 127.0.0.1 for development and tests: it accepts every message, parses it and
 * keeps it in memory (and, with `dir`, as one JSON file per message for the admin mail page).
 */
export async function startMailCatcher(options: { dir?: string; port?: number } = {}): Promise<MailCatcher> {
	const messages: CapturedMail[] = [];
	const waiters: { match: (mail: CapturedMail) => boolean; resolve: (mail: CapturedMail) => void }[] = [];
	if (options.dir) mkdirSync(options.dir, { recursive: true, mode: 0o700 });

	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		banner: 'Candlebook local mail catcher',
		onData(stream, session, callback) {
			simpleParser(stream)
				.then((parsed) => {
					const mail: CapturedMail = {
						id: crypto.randomUUID(),
						receivedAt: new Date().toISOString(),
						from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						to: session.envelope.rcptTo.map((recipient) => recipient.address),
						subject: parsed.subject ?? '',
						text: parsed.text ?? ''
					};
					messages.push(mail);
					if (options.dir) {
						const name = `${mail.receivedAt.replace(/[:.]/g, '-')}-${mail.id}.json`;
						writeFileSync(join(options.dir, name), JSON.stringify(mail, null, 2), { mode: 0o600 });
					}
					for (const waiter of [...waiters]) {
						if (waiter.match(mail)) {
							waiters.splice(waiters.indexOf(waiter), 1);
							waiter.resolve(mail);
						}
					}
					callback();
				})
				.catch((error: Error) => callback(error));
		}
	});

	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(options.port ?? 0, '127.0.0.1', () => resolve());
	});
	const port = (server.server.address() as AddressInfo).port;

	return {
		url: `smtp://127.0.0.1:${port}`,
		port,
		messages,
		waitFor(match, timeoutMs = 10_000) {
			const found = messages.find(match);
			if (found) return Promise.resolve(found);
			return new Promise((resolve, reject) => {
				const timer = setTimeout(() => reject(new Error('no matching mail arrived')), timeoutMs);
				waiters.push({
					match,
					resolve: (mail) => {
						clearTimeout(timer);
						resolve(mail);
					}
				});
			});
		},
		close: () => new Promise<void>((resolve) => server.close(() => resolve()))
	};
}
