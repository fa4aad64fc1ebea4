import nodemailer, { type Transporter } from 'nodemailer';
import { getConfig } from '../config';
import { logger } from '../logger';

export interface OutgoingMail {
	to: string;
	subject: string;
	text: string;
}

let transport: { url: string; transporter: Transporter } | undefined;

function transporterFor(url: string): Transporter {
	if (transport?.url !== url) {
		// Short timeouts: a request that sends mail should fail, not hang, when the server is away.
		const transporter = nodemailer.createTransport({
			url,
			connectionTimeout: 10_000,
			greetingTimeout: 10_000,
			socketTimeout: 30_000
		} as Parameters<typeof nodemailer.createTransport>[0]);
		transport = { url, transporter };
	}
	return transport.transporter;
}

/**
 * Sends one message through SMTP_URL. Without SMTP_URL nothing is sent and a warning names the
 * recipient and subject (never the body, which may hold a link).
 */
export async function sendMail(mail: OutgoingMail): Promise<void> {
	const config = getConfig();
	if (!config.SMTP_URL) {
		logger.warn({ to: mail.to, subject: mail.subject }, 'SMTP_URL is not set; mail was not sent');
		return;
	}
	await transporterFor(config.SMTP_URL).sendMail({ from: config.CANDLEBOOK_MAIL_FROM, ...mail });
}
