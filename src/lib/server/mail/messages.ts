import type { OutgoingMail } from './mailer';

const SIGNATURE = '\n\n— Candlebook, the registry of reviewed period–luminosity calibrations';

export function invitationMail(to: string, displayName: string, link: string, days: number): OutgoingMail {
	return {
		to,
		subject: 'You are invited to Candlebook',
		text:
			`Hello ${displayName},\n\nYou have been invited to Candlebook. Choose your password here ` +
			`(the link works once and for ${days} days):\n\n${link}${SIGNATURE}`
	};
}

export function passwordResetMail(to: string, link: string, minutes: number): OutgoingMail {
	return {
		to,
		subject: 'Choose a new Candlebook password',
		text:
			`Someone asked to reset the password of the Candlebook account for this address. If it was you, ` +
			`choose a new password here (the link works once and for ${minutes} minutes):\n\n${link}\n\n` +
			`If it was not you, ignore this message; your password stays as it is.${SIGNATURE}`
	};
}

export function emailChangeMail(to: string, link: string, hours: number): OutgoingMail {
	return {
		to,
		subject: 'Confirm your new Candlebook address',
		text:
			`Confirm that this address should replace the one on your Candlebook account (the link works ` +
			`once and for ${hours} hours):\n\n${link}${SIGNATURE}`
	};
}

/** To the owner of an address another account asked to move to: nothing changes, and they know it was tried. */
export function addressInUseMail(to: string): OutgoingMail {
	return {
		to,
		subject: 'Your Candlebook address was asked for',
		text:
			`Someone signed in to another Candlebook account asked to move that account to this address. ` +
			`This address already belongs to your account, so nothing has changed. If you know who it was, ` +
			`they can use a different address.${SIGNATURE}`
	};
}
