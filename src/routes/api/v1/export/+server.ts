import { archiveKey, archiveListing, archiveStream } from '$lib/server/registry/archive';
import { archiveCache } from '$lib/server/registry/archive-cache';
import { matchesIfNoneMatch } from '$lib/server/edge/immutable-cache';
import type { RequestHandler } from './$types';

/**
 * The deposit archive of everything public (zip); see README.txt inside it. Built once per distinct
 * content and served from memory after that; the ETag is the content address, so a client that has the
 * archive gets 304.
 */
export const GET: RequestHandler = async ({ locals, request }) => {
	const em = locals.em.fork();
	const listing = await archiveListing(em);
	const key = archiveKey(listing);
	const etag = `"sha256-${key}"`;
	if (matchesIfNoneMatch(request.headers.get('if-none-match') ?? undefined, etag))
		return new Response(null, { status: 304, headers: { etag, 'cache-control': 'no-cache' } });
	const bytes = await archiveCache.bytes(key, () => archiveStream(em, listing));
	return new Response(bytes as Uint8Array<ArrayBuffer>, {
		headers: {
			'content-type': 'application/zip',
			'content-length': String(bytes.byteLength),
			'content-disposition': `attachment; filename="candlebook-archive-${new Date().toISOString().slice(0, 10)}.zip"`,
			'cache-control': 'no-cache',
			etag
		}
	});
};
