import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { AccountError, invite, sendInvitation, setRoles } from '$lib/server/accounts/account-service';
import { toGroupDto, toPersonDto } from '$lib/server/accounts/dto';
import { listGroups } from '$lib/server/accounts/group-service';
import { DisplayNameSchema, EmailSchema, GroupSlugSchema, RolesSchema } from '$lib/server/accounts/schemas';
import { requireRole } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { publicOrigin } from '$lib/server/config';
import { GroupMembership, User } from '$lib/server/entities/index';
import { formErrors, textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	requireRole('admin');
	const [users, memberships, groups] = await Promise.all([
		locals.em.find(User, {}, { orderBy: { displayName: 'asc' } }),
		locals.em.find(GroupMembership, {}, { populate: ['group'] }),
		listGroups(locals.em)
	]);
	return {
		people: users.map((user) => ({
			...toPersonDto(user),
			groups: memberships
				.filter((membership) => membership.user.id === user.id)
				.map((membership) => `${membership.group.slug}${membership.standing === 'manager' ? ' (manager)' : ''}`)
		})),
		groups: groups.map(toGroupDto)
	};
};

const InviteSchema = z.object({
	email: EmailSchema,
	displayName: DisplayNameSchema,
	roles: RolesSchema,
	groups: z.array(GroupSlugSchema),
	managerOf: z.array(GroupSlugSchema)
});

export const actions: Actions = {
	invite: async (event) => {
		requireRole('admin');
		const data = await event.request.formData();
		const fields = textFields(data);
		const parsed = InviteSchema.safeParse({
			...fields,
			roles: data.getAll('roles'),
			groups: data.getAll('groups'),
			managerOf: data.getAll('managerOf')
		});
		if (!parsed.success) return fail(400, { values: fields, errors: formErrors(parsed.error) });
		const { groups, managerOf, ...person } = parsed.data;
		const slugs = [...new Set([...groups, ...managerOf])];
		try {
			await invite(
				event.locals.em,
				{
					...person,
					groups: slugs.map((slug) => ({ slug, standing: managerOf.includes(slug) ? 'manager' : 'member' }))
				},
				publicOrigin(),
				auditContext(event)
			);
		} catch (cause) {
			if (cause instanceof AccountError) return fail(400, { values: fields, errors: { email: [cause.message] } });
			throw cause;
		}
		return { invited: person.email };
	},

	setRoles: async (event) => {
		const admin = requireRole('admin');
		const data = await event.request.formData();
		const parsed = z
			.object({ userId: z.uuid(), roles: RolesSchema })
			.safeParse({ userId: data.get('userId'), roles: data.getAll('roles') });
		if (!parsed.success) return fail(400, { values: {}, errors: formErrors(parsed.error) });
		if (parsed.data.userId === admin.id && !parsed.data.roles.includes('admin')) {
			return fail(400, { values: {}, errors: { roles: ['You cannot take the admin role from yourself.'] } });
		}
		if (!(await event.locals.em.count(User, { id: parsed.data.userId }))) error(404, 'No such person.');
		await setRoles(event.locals.em, parsed.data.userId, parsed.data.roles, auditContext(event));
		return { rolesSaved: parsed.data.userId };
	},

	resendInvitation: async (event) => {
		requireRole('admin');
		const parsed = z.object({ userId: z.uuid() }).safeParse(textFields(await event.request.formData()));
		if (!parsed.success) return fail(400, { values: {}, errors: formErrors(parsed.error) });
		const user = await event.locals.em.findOne(User, { id: parsed.data.userId });
		if (!user) error(404, 'No such person.');
		try {
			await sendInvitation(event.locals.em, user, publicOrigin(), auditContext(event));
		} catch (cause) {
			if (cause instanceof AccountError) return fail(400, { values: {}, errors: { userId: [cause.message] } });
			throw cause;
		}
		return { invited: user.email };
	}
};
