import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';

/** Liveness: the process is up and answering. Touches nothing else. */
export const GET: RequestHandler = () => json({ status: 'ok' }, { headers: { 'cache-control': 'no-store' } });
