import type { EntityManager } from '@mikro-orm/postgresql';
import { sha256 } from '@oslojs/crypto/sha2';
import { encodeHexLowerCase } from '@oslojs/encoding';
import { contentDigest } from '$lib/publishing/content-digest';
import {
	REVISION_FILE_EXTENSIONS,
	REVISION_FORMATS,
	REVISION_MEDIA_TYPES,
	formatFromAccept,
	renderRevision,
	type RevisionFormat
} from '$lib/publishing/revision-export';
import type { Actor } from '../registry/actor';
import { revisionContent } from '../registry/calibrator-sets';
import { findVisibleRevision } from '../registry/calibrator-set-reads';
import { RegistryError } from '../registry/errors';

/** `?format=` wins over `Accept`; an unknown format is a client error rather than a silent JSON answer. */
export function revisionFormat(param: string | null, accept: string | null): RevisionFormat {
	if (param === null) return formatFromAccept(accept);
	if ((REVISION_FORMATS as readonly string[]).includes(param)) return param as RevisionFormat;
	throw new RegistryError(400, 'bad-query', `?format= must be one of ${REVISION_FORMATS.join(', ')}.`);
}

export const revisionPath = (slug: string, number: number, format?: RevisionFormat) =>
	`/api/v1/calibrator-sets/${slug}/revisions/${number}${format ? `?format=${format}` : ''}`;

/** An SPDX licence page when the licence is a single id; expressions have no single page. */
const spdxPage = (licence: string) =>
	/^[A-Za-z0-9.+-]+$/.test(licence) ? `https://spdx.org/licenses/${licence.replace(/\+$/, '')}.html` : null;

/**
 * One calibrator revision in the asked format. The bytes depend only on the stored revision and its
 * set's licence and citations, so repeated fetches are identical: the ETag is the body's SHA-256,
 * public sets are cacheable for a year, and the revision digest travels in a header for every format.
 */
export async function revisionResponse(
	em: EntityManager,
	reader: Actor | null,
	slug: string,
	number: number,
	format: RevisionFormat,
	ifNoneMatch: string | null
): Promise<Response> {
	const { set, revision } = await findVisibleRevision(em, reader, slug, number);
	const content = revisionContent(revision);
	const body = new TextEncoder().encode(
		renderRevision(format, { content, title: set.title, licence: set.licence, citations: set.citations })
	);
	const etag = `"sha256-${encodeHexLowerCase(sha256(body))}"`;
	const licencePage = spdxPage(set.licence);
	const links = [
		...(licencePage ? [`<${licencePage}>; rel="license"`] : []),
		// The JSON form carries the licence and the citations users must give, for every format.
		`<${revisionPath(slug, number, 'json')}>; rel="describedby"; type="application/json"`,
		...REVISION_FORMATS.filter((other) => other !== format).map(
			(other) => `<${revisionPath(slug, number, other)}>; rel="alternate"; type="${REVISION_MEDIA_TYPES[other]}"`
		)
	];
	const isPublic = set.visibility === 'public';
	const headers: Record<string, string> = {
		// RFC 4180 §3: text/csv names its charset and whether a header line is present.
		'content-type': format === 'csv' ? 'text/csv; charset=utf-8; header=present' : REVISION_MEDIA_TYPES[format],
		etag,
		'content-digest': contentDigest(body),
		'candlebook-revision-digest': content.digest,
		link: links.join(', '),
		...(format === 'json'
			? {}
			: { 'content-disposition': `attachment; filename="${slug}-${number}.${REVISION_FILE_EXTENSIONS[format]}"` }),
		...(isPublic
			? { 'cache-control': 'public, max-age=31536000, immutable', vary: 'Accept' }
			: { 'cache-control': 'private, no-cache', vary: 'Accept, Authorization, Cookie' })
	};
	const tags = (ifNoneMatch ?? '').split(',').map((tag) => tag.trim().replace(/^W\//, ''));
	if (tags.includes(etag) || tags.includes('*')) return new Response(null, { status: 304, headers });
	return new Response(body, { status: 200, headers });
}
