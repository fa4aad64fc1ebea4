import { redirect } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import { requireRole } from '$lib/server/auth/guards';
import { groupChoices } from '$lib/server/calibrator-pages/catalogue';
import { createCalibratorSet } from '$lib/server/registry/calibrator-sets';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf } from '$lib/server/registry/http';
import { CreateCalibratorSetSchema } from '$lib/server/registry/schemas';
import type { Actions, PageServerLoad } from './$types';

/** The form's shape: the API's, with citations as one per line. */
const NewSetForm = z.object({
	slug: z.string().trim().min(1, 'Give the set a slug.'),
	title: z.string().trim().min(1, 'Give the set a title.'),
	description: z.string().default(''),
	group: z.string().min(1, 'Choose the group that owns the set.'),
	licence: z.string().trim().min(1, 'Name the data licence (an SPDX id, e.g. CC-BY-4.0).'),
	citations: z.string().default('')
});
const adapter = zod4(NewSetForm);

export const load: PageServerLoad = async ({ locals }) => {
	const user = requireRole('curator');
	return { form: await superValidate(adapter), groups: await groupChoices(locals.em, user) };
};

export const actions: Actions = {
	default: async ({ request, locals }) => {
		requireRole('curator');
		const form = await superValidate(request, adapter);
		if (!form.valid) return fail(400, { form });
		const parsed = CreateCalibratorSetSchema.safeParse({
			...form.data,
			citations: form.data.citations
				.split('\n')
				.map((line) => line.trim())
				.filter(Boolean)
		});
		if (!parsed.success) {
			for (const issue of parsed.error.issues) {
				const field = String(issue.path[0] ?? '');
				if (field in form.data) form.errors[field as keyof typeof form.data] = [issue.message];
			}
			return message(form, 'Some fields need another look.', { status: 400 });
		}
		let slug: string;
		try {
			slug = (await createCalibratorSet(locals.em, actorOf(locals), parsed.data)).slug;
		} catch (cause) {
			if (!(cause instanceof RegistryError)) throw cause;
			if (cause.code === 'slug-taken') return setError(form, 'slug', cause.message);
			if (cause.errors.some((e) => e.path === 'group')) return setError(form, 'group', cause.message);
			return message(form, cause.message, { status: cause.status === 403 ? 403 : 400 });
		}
		redirect(303, `/calibrator-sets/${slug}?created=1`);
	}
};
