import { json } from '@sveltejs/kit';
import { groupToWire } from '$lib/server/api/account-mappers';
import { toGroupDto } from '$lib/server/accounts/dto';
import { listGroups } from '$lib/server/accounts/group-service';
import type { RequestHandler } from './$types';

/** Group names are public; what a group owns is shown according to its visibility. */
export const GET: RequestHandler = async ({ locals }) =>
	json({ groups: (await listGroups(locals.em)).map((group) => groupToWire(toGroupDto(group))) });
