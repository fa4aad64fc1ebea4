import { json } from '@sveltejs/kit';
import { memberToWire } from '$lib/server/api/account-mappers';
import { AddGroupMemberSchema, type GroupMemberAddedSchema } from '$lib/server/api/account-schemas';
import { fail } from '$lib/server/api/errors';
import { readJsonBody } from '$lib/server/api/request-body';
import { toMemberDto } from '$lib/server/accounts/dto';
import { addOrInviteMember, GroupError, listMembers } from '$lib/server/accounts/group-service';
import { requireGroupStanding } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { publicOrigin } from '$lib/server/config';
import { Group } from '$lib/server/entities/index';
import type { z } from 'zod';
import type { RequestHandler } from './$types';

const MAX_BODY_BYTES = 4096;

export const GET: RequestHandler = async ({ locals, params }) => {
	await requireGroupStanding(params.slug, 'member');
	if (!(await locals.em.count(Group, { slug: params.slug }))) fail(404, `No group called ${params.slug}.`);
	const members = await listMembers(locals.em, params.slug);
	return json({ members: members.map((member) => memberToWire(toMemberDto(member))) });
};

/** The answer does not depend on whether the address had an account (no display name, no id). */
export const POST: RequestHandler = async (event) => {
	await requireGroupStanding(event.params.slug, 'manager');
	const body = await readJsonBody(event.request, AddGroupMemberSchema, MAX_BODY_BYTES);
	try {
		await addOrInviteMember(
			event.locals.em,
			event.params.slug,
			body.email,
			body.standing,
			publicOrigin(),
			auditContext(event)
		);
	} catch (cause) {
		if (cause instanceof GroupError) fail(404, cause.message);
		throw cause;
	}
	const added: z.infer<typeof GroupMemberAddedSchema> = {
		group: event.params.slug,
		email: body.email,
		standing: body.standing
	};
	return json(added, { status: 201 });
};
