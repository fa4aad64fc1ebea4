/**
 * RFC 9530 `Content-Digest` for a response body: `sha-256=:<base64 of the SHA-256 of the bytes>:`, a
 * Structured Field dictionary (RFC 8941) whose value is a byte sequence.
 */
import { sha256 } from '@oslojs/crypto/sha2';
import { decodeBase64, encodeBase64 } from '@oslojs/encoding';

export function contentDigest(body: Uint8Array): string {
	return `sha-256=:${encodeBase64(sha256(body))}:`;
}

/** The sha-256 member of a Content-Digest header, or null when it is absent or malformed. */
export function parseContentDigest(header: string): Uint8Array | null {
	for (const member of header.split(',')) {
		const match = /^\s*sha-256\s*=\s*:([A-Za-z0-9+/]+={0,2}):\s*$/.exec(member);
		if (!match) continue;
		try {
			const bytes = decodeBase64(match[1]);
			return bytes.length === 32 ? bytes : null;
		} catch {
			return null;
		}
	}
	return null;
}
