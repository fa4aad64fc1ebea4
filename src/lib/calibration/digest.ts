/**
 * Content digests: digest = "sha256:" + hex(SHA-256(UTF-8 of the RFC 8785 canonical JSON of the content)),
 * the content being everything except the `digest` field itself. Pure JavaScript hashing, so the same
 * code runs on the server and in the browser.
 */
import canonicalize from 'canonicalize';
import { sha256 } from '@oslojs/crypto/sha2';
import { encodeHexLowerCase } from '@oslojs/encoding';
import {
	parseCalibratorRevisionContent,
	parseRelationVersionContent,
	type CalibratorRevisionContent,
	type RelationVersionContent
} from './frozen-content';
import { CalibrationInputError } from './types';

const DIGEST_PREFIX = 'sha256:';
const encoder = new TextEncoder();

/** RFC 8785 (JSON Canonicalization Scheme) serialisation. */
export function canonicalJson(value: unknown): string {
	const text = canonicalize(value);
	if (text === undefined) {
		throw new CalibrationInputError([{ star: null, field: '(root)', message: 'has no JSON representation' }]);
	}
	return text;
}

/** Lowercase hex SHA-256 of the UTF-8 encoding of a string. */
export function sha256Hex(text: string): string {
	return encodeHexLowerCase(sha256(encoder.encode(text)));
}

/** `sha256:<hex>` of the canonical JSON of any JSON value (no validation). */
export function digestOf(value: unknown): string {
	return DIGEST_PREFIX + sha256Hex(canonicalJson(value));
}

function withoutDigest(body: Record<string, unknown>): Record<string, unknown> {
	const { digest: _digest, ...content } = body;
	return content;
}

/** Validates relation-version content and returns its digest. */
export function relationVersionDigest(content: RelationVersionContent): string {
	return digestOf(parseRelationVersionContent(withoutDigest(content as Record<string, unknown>)));
}

/** Validates calibrator-revision content and returns its digest. */
export function calibratorRevisionDigest(content: CalibratorRevisionContent): string {
	return digestOf(parseCalibratorRevisionContent(withoutDigest(content as Record<string, unknown>)));
}

/** The content with its digest added, ready to store and serve. */
export function sealRelationVersion(content: RelationVersionContent): RelationVersionContent & { digest: string } {
	return { ...content, digest: relationVersionDigest(content) };
}

export function sealCalibratorRevision(
	content: CalibratorRevisionContent
): CalibratorRevisionContent & { digest: string } {
	return { ...content, digest: calibratorRevisionDigest(content) };
}

export interface DigestCheck {
	ok: boolean;
	/** The digest the body states, or null if it has none. */
	stated: string | null;
	/** The digest recomputed from the body without its `digest` field. */
	computed: string;
}

/** Recomputes a served body's digest (over everything but `digest`) and compares it with the stated one. */
export function verifyDigest(body: Record<string, unknown>): DigestCheck {
	const stated = typeof body.digest === 'string' ? body.digest : null;
	const computed = digestOf(withoutDigest(body));
	return { ok: stated === computed, stated, computed };
}
