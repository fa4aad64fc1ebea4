import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { toGroupDto, toMemberDto } from '$lib/server/accounts/dto';
import {
	addMember,
	addOrInviteMember,
	GroupError,
	listMembers,
	removeMember,
	standingIn
} from '$lib/server/accounts/group-service';
import { EmailSchema } from '$lib/server/accounts/schemas';
import { requireGroupStanding } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { publicOrigin } from '$lib/server/config';
import { Group, GROUP_STANDINGS } from '$lib/server/entities/index';
import { formErrors, textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, params }) => {
	const user = await requireGroupStanding(params.slug, 'member');
	const group = await locals.em.findOne(Group, { slug: params.slug });
	if (!group) error(404, 'No such group.');
	const standing = await standingIn(locals.em, user.id, params.slug);
	const members = await listMembers(locals.em, params.slug);
	return {
		group: toGroupDto(group),
		members: members.map(toMemberDto),
		canManage: standing === 'manager' || user.roles.includes('admin'),
		viewerId: user.id
	};
};

const AddSchema = z.object({ email: EmailSchema, standing: z.enum(GROUP_STANDINGS).default('member') });
const MemberSchema = z.object({ userId: z.uuid() });
const StandingSchema = z.object({ userId: z.uuid(), standing: z.enum(GROUP_STANDINGS) });

export const actions: Actions = {
	addMember: async (event) => {
		await requireGroupStanding(event.params.slug, 'manager');
		const fields = textFields(await event.request.formData());
		const parsed = AddSchema.safeParse(fields);
		if (!parsed.success) return fail(400, { values: fields, errors: formErrors(parsed.error) });
		try {
			await addOrInviteMember(
				event.locals.em,
				event.params.slug,
				parsed.data.email,
				parsed.data.standing,
				publicOrigin(),
				auditContext(event)
			);
		} catch (cause) {
			if (cause instanceof GroupError) error(404, cause.message);
			throw cause;
		}
		// The same answer whether or not the address had an account.
		return { added: parsed.data.email };
	},

	removeMember: async (event) => {
		await requireGroupStanding(event.params.slug, 'manager');
		const parsed = MemberSchema.safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { values: {}, errors: formErrors(parsed.error) });
		try {
			await removeMember(event.locals.em, event.params.slug, parsed.data.userId, auditContext(event));
		} catch (cause) {
			if (cause instanceof GroupError) error(404, cause.message);
			throw cause;
		}
		return { removed: true };
	},

	setStanding: async (event) => {
		await requireGroupStanding(event.params.slug, 'manager');
		const parsed = StandingSchema.safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { values: {}, errors: formErrors(parsed.error) });
		const member = (await listMembers(event.locals.em, event.params.slug)).find(
			(membership) => membership.user.id === parsed.data.userId
		);
		if (!member) error(404, 'That person is not a member of this group.');
		await addMember(event.locals.em, event.params.slug, member.user.email, parsed.data.standing, auditContext(event));
		return { changed: true };
	}
};
