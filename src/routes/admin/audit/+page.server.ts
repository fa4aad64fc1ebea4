import { requireRole } from '$lib/server/auth/guards';
import { AUDIT_KINDS } from '$lib/server/entities/audit-event.entity';
import { auditPage, auditQueryOf } from '$lib/server/admin/audit-trail';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	requireRole('admin');
	const { query, errors } = auditQueryOf(url.searchParams);
	const values = Object.fromEntries(
		['kind', 'actor', 'subject', 'from', 'to'].map((key) => [key, url.searchParams.get(key) ?? ''])
	);
	return { ...(await auditPage(locals.em, query)), kinds: [...AUDIT_KINDS].sort(), values, errors };
};
