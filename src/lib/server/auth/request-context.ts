import type { RequestEvent } from '@sveltejs/kit';
import type { AuditContext } from '../accounts/audit';
import { sitePath } from '../http/safe-redirect';

/** Who did it and from where, for the audit log. */
export function auditContext(event: Pick<RequestEvent, 'locals' | 'getClientAddress'>): AuditContext {
	return { actorId: event.locals.user?.id ?? null, clientAddress: clientAddress(event) };
}

export function clientAddress(event: Pick<RequestEvent, 'getClientAddress'>): string {
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}

/** A `next` target that stays on this site: `fallback` when none was given, `/` when it leads elsewhere. */
export function safeNext(value: string | null | undefined, fallback = '/account'): string {
	return sitePath(value, fallback);
}
