import { archiveStream } from '$lib/server/registry/archive';
import type { RequestHandler } from './$types';

/** The deposit archive of everything public (zip, streamed); see README.txt inside it. */
export const GET: RequestHandler = ({ locals }) =>
	new Response(archiveStream(locals.em.fork()), {
		headers: {
			'content-type': 'application/zip',
			'content-disposition': `attachment; filename="candlebook-archive-${new Date().toISOString().slice(0, 10)}.zip"`,
			'cache-control': 'no-cache'
		}
	});
