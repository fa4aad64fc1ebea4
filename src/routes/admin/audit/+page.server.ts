import { toAuditDto } from '$lib/server/accounts/dto';
import { requireRole } from '$lib/server/auth/guards';
import { AuditEvent } from '$lib/server/entities/index';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	requireRole('admin');
	const events = await locals.em.find(AuditEvent, {}, { orderBy: { id: 'desc' }, limit: 200 });
	return { events: events.map(toAuditDto) };
};
