import { redirect } from '@sveltejs/kit';
import { fail, message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import { BANDS, POPULATION_IDS } from '$lib/calibration/index';
import { requireRole } from '$lib/server/auth/guards';
import { groupChoices } from '$lib/server/calibrator-pages/catalogue';
import { ANCHOR_TYPES, RELATION_VISIBILITIES } from '$lib/server/entities/relation.entity';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf } from '$lib/server/registry/http';
import { createRelation } from '$lib/server/registry/relations';
import { CreateRelationSchema } from '$lib/server/registry/schemas';
import type { Actions, PageServerLoad } from './$types';

const NewRelationForm = z.object({
	slug: z.string().trim().min(1, 'Give the relation a slug.'),
	title: z.string().trim().min(1, 'Give the relation a title.'),
	description: z.string().default(''),
	band: z.string().min(1, 'Choose a band.'),
	population: z.enum(POPULATION_IDS, 'Choose a population.'),
	anchor_type: z.enum(ANCHOR_TYPES, 'Choose how the relation is anchored.'),
	group: z.string().min(1, 'Choose the owning group.'),
	visibility: z.enum(RELATION_VISIBILITIES).default('public'),
	required_approvals: z.string().default(''),
	magnitude_system: z.enum(['', 'Vega', 'AB']).default('')
});
const adapter = zod4(NewRelationForm);

export const load: PageServerLoad = async ({ locals }) => {
	const user = requireRole('curator');
	return {
		form: await superValidate(adapter),
		groups: await groupChoices(locals.em, user),
		bands: Object.values(BANDS).map((band) => ({ id: band.id, label: band.label })),
		populations: [...POPULATION_IDS],
		anchorTypes: [...ANCHOR_TYPES]
	};
};

export const actions: Actions = {
	default: async ({ request, locals }) => {
		requireRole('curator');
		const form = await superValidate(request, adapter);
		if (!form.valid) return fail(400, { form });
		const approvals = form.data.required_approvals.trim();
		if (approvals !== '' && !/^\d+$/.test(approvals))
			return setError(form, 'required_approvals', 'A whole number from 1 to 10, or empty for the default.');
		const parsed = CreateRelationSchema.safeParse({
			...form.data,
			required_approvals: approvals === '' ? null : Number(approvals),
			magnitude_system: form.data.magnitude_system || null
		});
		if (!parsed.success) {
			for (const issue of parsed.error.issues) {
				const field = String(issue.path[0] ?? '');
				if (field in form.data) form.errors[field as keyof typeof form.data] = [issue.message];
			}
			return message(form, 'Some fields need another look.', { status: 400 });
		}
		const input = parsed.data;
		try {
			await createRelation(locals.em, actorOf(locals), {
				slug: input.slug,
				title: input.title,
				description: input.description,
				band: input.band,
				population: input.population,
				anchorType: input.anchor_type,
				group: input.group,
				visibility: input.visibility,
				requiredApprovals: input.required_approvals,
				magnitudeSystem: input.magnitude_system
			});
		} catch (cause) {
			if (!(cause instanceof RegistryError)) throw cause;
			if (cause.code === 'slug-taken') return setError(form, 'slug', cause.message);
			const field = cause.errors[0]?.path;
			if (field === 'band' || field === 'group') return setError(form, field, cause.message);
			return message(form, cause.message, { status: cause.status === 403 ? 403 : 400 });
		}
		redirect(303, `/relations/${input.slug}/refit?created=1`);
	}
};
