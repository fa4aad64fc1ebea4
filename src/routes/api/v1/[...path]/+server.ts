import type { RequestHandler } from './$types';
import { problem } from '$lib/server/api/problem';

/** Any path under /api/v1 that no route claims. */
export const fallback: RequestHandler = ({ url }) =>
	problem(404, `No API resource at ${url.pathname}.`, { instance: url.pathname });
