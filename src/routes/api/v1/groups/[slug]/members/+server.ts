import { json } from '@sveltejs/kit';
import { memberToWire } from '$lib/server/api/account-mappers';
import { AddGroupMemberSchema } from '$lib/server/api/account-schemas';
import { fail } from '$lib/server/api/errors';
import { readJsonBody } from '$lib/server/api/request-body';
import { toMemberDto } from '$lib/server/accounts/dto';
import { addMember, GroupError, listMembers } from '$lib/server/accounts/group-service';
import { requireGroupStanding } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { Group } from '$lib/server/entities/index';
import type { RequestHandler } from './$types';

const MAX_BODY_BYTES = 4096;

export const GET: RequestHandler = async ({ locals, params }) => {
	await requireGroupStanding(params.slug, 'member');
	if (!(await locals.em.count(Group, { slug: params.slug }))) fail(404, `No group called ${params.slug}.`);
	const members = await listMembers(locals.em, params.slug);
	return json({ members: members.map((member) => memberToWire(toMemberDto(member))) });
};

export const POST: RequestHandler = async (event) => {
	await requireGroupStanding(event.params.slug, 'manager');
	const body = await readJsonBody(event.request, AddGroupMemberSchema, MAX_BODY_BYTES);
	try {
		const membership = await addMember(
			event.locals.em,
			event.params.slug,
			body.email,
			body.standing,
			auditContext(event)
		);
		return json(memberToWire(toMemberDto(membership)), { status: 201 });
	} catch (cause) {
		if (cause instanceof GroupError) fail(cause.message.startsWith('There is no group') ? 404 : 422, cause.message);
		throw cause;
	}
};
