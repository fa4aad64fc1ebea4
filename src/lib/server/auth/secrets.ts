import { sha256 } from '@oslojs/crypto/sha2';
import { encodeBase32LowerCaseNoPadding, encodeHexLowerCase } from '@oslojs/encoding';

/** A fresh random secret of 160 bits, base32 (32 characters, URL- and header-safe). */
export function generateSecret(): string {
	const bytes = new Uint8Array(20);
	crypto.getRandomValues(bytes);
	return encodeBase32LowerCaseNoPadding(bytes);
}

/** The sha256 of a secret, hex: the only form in which sessions, tokens and links are stored. */
export function hashSecret(secret: string): string {
	return encodeHexLowerCase(sha256(new TextEncoder().encode(secret)));
}

/** API tokens carry a recognisable prefix, so a leaked one is easy to spot in logs and repositories. */
export const API_TOKEN_PREFIX = 'cbk_';

export function generateApiToken(): string {
	return `${API_TOKEN_PREFIX}${generateSecret()}`;
}
