import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { toGroupDto } from '$lib/server/accounts/dto';
import { createGroup, GroupError, listGroups } from '$lib/server/accounts/group-service';
import { GroupSlugSchema } from '$lib/server/accounts/schemas';
import { requireRole } from '$lib/server/auth/guards';
import { auditContext } from '$lib/server/auth/request-context';
import { formErrors, textFields } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	requireRole('admin');
	return { groups: (await listGroups(locals.em)).map(toGroupDto) };
};

const GroupSchema = z.object({
	slug: GroupSlugSchema,
	name: z.string().trim().min(1, 'Name the group.').max(200),
	description: z
		.string()
		.trim()
		.max(2000)
		.transform((value) => (value === '' ? null : value))
});

export const actions: Actions = {
	create: async (event) => {
		requireRole('admin');
		const fields = textFields(await event.request.formData());
		const parsed = GroupSchema.safeParse({ description: '', ...fields });
		if (!parsed.success) return fail(400, { values: fields, errors: formErrors(parsed.error) });
		try {
			await createGroup(event.locals.em, parsed.data, auditContext(event));
		} catch (cause) {
			if (cause instanceof GroupError) return fail(400, { values: fields, errors: { slug: [cause.message] } });
			throw cause;
		}
		return { created: parsed.data.slug };
	}
};
