/**
 * ORCID iDs: sixteen characters in four blocks, the last a check character computed with ISO 7064
 * MOD 11-2 over the first fifteen digits (the algorithm ORCID documents for its identifiers).
 */
const ORCID_SHAPE = /^(\d{4})-?(\d{4})-?(\d{4})-?(\d{3}[\dX])$/;
const ORCID_URL_PREFIX = /^(https?:\/\/)?(www\.)?orcid\.org\//i;

/** ISO 7064 MOD 11-2 check character of a string of base digits. */
export function mod112CheckCharacter(baseDigits: string): string {
	let total = 0;
	for (const digit of baseDigits) total = (total + Number(digit)) * 2;
	const result = (12 - (total % 11)) % 11;
	return result === 10 ? 'X' : String(result);
}

export type OrcidCheck = { ok: true; orcid: string } | { ok: false; message: string };

/** Accepts `0000-0002-1825-0097`, the same without hyphens, or as an orcid.org URL. */
export function parseOrcid(input: string): OrcidCheck {
	const trimmed = input.trim().replace(ORCID_URL_PREFIX, '').toUpperCase();
	const match = ORCID_SHAPE.exec(trimmed);
	if (!match) return { ok: false, message: 'An ORCID iD has sixteen digits in four groups, like 0000-0000-0000-0000.' };
	const digits = match.slice(1).join('');
	if (mod112CheckCharacter(digits.slice(0, 15)) !== digits[15]) {
		return {
			ok: false,
			message: 'This ORCID iD has a wrong check digit; please copy it again from your ORCID record.'
		};
	}
	return { ok: true, orcid: `${digits.slice(0, 4)}-${digits.slice(4, 8)}-${digits.slice(8, 12)}-${digits.slice(12)}` };
}
