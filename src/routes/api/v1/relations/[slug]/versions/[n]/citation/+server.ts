import { CitationQuerySchema } from '$lib/server/api/read-schemas';
import { readerOf, registryResponse, versionParam } from '$lib/server/registry/http';
import { parseQuery } from '$lib/server/registry/read-http';
import { CITATION_MEDIA_TYPES, citationSource, renderCitation } from '$lib/server/registry/version-citation';
import type { RequestHandler } from './$types';

/** `?style=text|bibtex|csl-json|datacite`: a citation naming the slug, version, digest and approvers. */
export const GET: RequestHandler = ({ locals, params, url }) =>
	registryResponse(async () => {
		const { style } = parseQuery(url, CitationQuerySchema);
		const reader = readerOf(locals);
		const source = await citationSource(locals.em, reader, params.slug, versionParam(params.n), url.origin);
		return new Response(renderCitation(source, style), {
			headers: {
				'content-type': `${CITATION_MEDIA_TYPES[style]}; charset=utf-8`,
				'content-disposition': `inline; filename="${source.slug}-v${source.version}${style === 'bibtex' ? '.bib' : style === 'text' ? '.txt' : '.json'}"`,
				vary: 'Authorization, Cookie',
				'cache-control': 'private, no-cache'
			}
		});
	});
