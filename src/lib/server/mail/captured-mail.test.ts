import { afterAll, describe, expect, test } from 'vitest';
import { capturedMailDir, withLinksWithheld, WITHHELD_LINK, type CapturedMail } from './captured-mail';

const started = performance.now();
afterAll(() => console.log(`captured-mail unit tests: ${Math.round(performance.now() - started)} ms`));

const invitation: CapturedMail = {
	id: 'm1',
	receivedAt: '2026-12-05T12:00:00.000Z',
	from: 'no-reply@candlebook.invalid',
	to: ['Newcomer@Example.org'],
	subject: 'You are invited to Candlebook',
	text: 'Choose your password here:\n\nhttps://candlebook.example.org/invitation?token=abcdef234567\n\nor http://127.0.0.1:3000/x'
};

describe('the captured-mail page', () => {
	test.each([
		[{ SMTP_URL: 'smtp://127.0.0.1:2525', CANDLEBOOK_MAIL_CAPTURE_DIR: '/tmp/mail' }, '/tmp/mail'],
		[{ SMTP_URL: 'smtp://localhost:2525', CANDLEBOOK_MAIL_CAPTURE_DIR: '/tmp/mail' }, '/tmp/mail'],
		[{ SMTP_URL: 'smtps://user:pw@mail.example.org:465', CANDLEBOOK_MAIL_CAPTURE_DIR: '/tmp/mail' }, null],
		[{ SMTP_URL: 'smtp://127.0.0.1:2525' }, null],
		[{ CANDLEBOOK_MAIL_CAPTURE_DIR: '/tmp/mail' }, null],
		[{}, null]
	])('is on only with the local fake SMTP server: %j → %j', (config, expected) => {
		expect(capturedMailDir(config)).toBe(expected);
	});

	test('someone else’s mail shows no link', () => {
		const seen = withLinksWithheld(invitation, 'admin@example.org');
		expect(seen.text).not.toMatch(/https?:\/\//);
		expect(seen.text).not.toContain('abcdef234567');
		expect(seen.text.split(WITHHELD_LINK)).toHaveLength(3);
		expect(seen.subject).toBe(invitation.subject);
	});

	test('the addressee sees the mail as sent, whatever the case of the address', () => {
		expect(withLinksWithheld(invitation, 'newcomer@example.org')).toEqual(invitation);
	});
});
