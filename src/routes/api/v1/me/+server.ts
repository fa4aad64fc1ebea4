import { json } from '@sveltejs/kit';
import { meToWire } from '$lib/server/api/account-mappers';
import { requireUser } from '$lib/server/auth/guards';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = ({ locals }) => json(meToWire(requireUser(), locals.apiToken));
