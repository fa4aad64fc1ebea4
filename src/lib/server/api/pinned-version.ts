import { canonicalJson } from '$lib/calibration';
import { contentDigest } from '$lib/publishing/content-digest';
import type { Actor } from '../registry/actor';
import { findVersion, isEmbargoed } from '../registry/versions';
import type { EntityManager } from '@mikro-orm/postgresql';

export interface PinnedResponseOptions {
	/** For a URL whose target moves (`/latest`): how long shared caches may keep a public answer. */
	publicCacheControl?: string;
	headers?: Record<string, string>;
}

/**
 * One frozen version as pipelines pin it: exactly its frozen content plus `digest`, as RFC 8785
 * canonical JSON so the bytes never change. ETag is the digest; public, unembargoed versions are
 * cacheable for a year by anyone; what depends on the viewer is private and varies on credentials.
 */
export async function pinnedVersionResponse(
	em: EntityManager,
	reader: Actor | null,
	slug: string,
	number: number,
	ifNoneMatch: string | null,
	options: PinnedResponseOptions = {}
): Promise<Response> {
	const { relation, version, lifecycle } = await findVersion(em, reader, slug, number);
	const body = new TextEncoder().encode(canonicalJson(version.content));
	const etag = `"${version.digest}"`;
	const isPublic = relation.visibility === 'public' && !isEmbargoed(lifecycle);
	const headers: Record<string, string> = {
		'content-type': 'application/json',
		etag,
		'content-digest': contentDigest(body),
		...(isPublic
			? {
					'cache-control': options.publicCacheControl ?? 'public, max-age=31536000, immutable',
					'access-control-allow-origin': '*'
				}
			: { 'cache-control': 'private, no-cache', vary: 'Authorization, Cookie' }),
		...options.headers
	};
	const tags = (ifNoneMatch ?? '').split(',').map((tag) => tag.trim().replace(/^W\//, ''));
	if (tags.includes(etag) || tags.includes('*')) return new Response(null, { status: 304, headers });
	return new Response(body, { status: 200, headers });
}

/** `slug@n` → its parts, or null. */
export function parseRef(ref: string): { slug: string; number: number } | null {
	const match = /^([a-z0-9]+(?:-[a-z0-9]+)*)@([1-9]\d{0,8})$/.exec(ref);
	return match ? { slug: match[1], number: Number(match[2]) } : null;
}
