import { error, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { requireUser } from '$lib/server/auth/guards';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, versionParam } from '$lib/server/registry/http';
import { deprecateVersion, releaseVersion } from '$lib/server/registry/versions';
import { lifecyclePage } from '$lib/server/review/lifecycle-page';
import { invalidForm, pageCommand } from '$lib/server/review/page-commands';
import type { Actions, PageServerLoad } from './$types';

function versionNumber(raw: string): number {
	try {
		return versionParam(raw);
	} catch (cause) {
		if (cause instanceof RegistryError) error(404, cause.message);
		throw cause;
	}
}

export const load: PageServerLoad = async ({ locals, params }) => {
	requireUser();
	try {
		return await lifecyclePage(locals.em, actorOf(locals), params.slug, versionNumber(params.n));
	} catch (cause) {
		if (cause instanceof RegistryError) error(cause.status, cause.message);
		throw cause;
	}
};

const DeprecateForm = z.object({
	reason: z
		.string()
		.trim()
		.min(1, 'Say why the version should no longer be used.')
		.max(5000, 'Keep it under 5,000 characters.'),
	successor: z
		.string()
		.regex(/^(|[1-9]\d{0,8})$/, 'Choose a version from the list.')
		.transform((value) => (value === '' ? null : Number(value)))
});

export const actions: Actions = {
	deprecate: async (event) => {
		requireUser();
		const number = versionNumber(event.params.n);
		const data = await event.request.formData();
		const values = { reason: String(data.get('reason') ?? ''), successor: String(data.get('successor') ?? '') };
		const parsed = DeprecateForm.safeParse(values);
		if (!parsed.success) return invalidForm('deprecate', values, parsed.error);
		const failure = await pageCommand('deprecate', values, async () => {
			await deprecateVersion(event.locals.em, actorOf(event.locals), event.params.slug, number, parsed.data);
		});
		if (failure) return failure;
		redirect(303, `${event.url.pathname}?done=deprecated`);
	},
	release: async (event) => {
		requireUser();
		const number = versionNumber(event.params.n);
		const failure = await pageCommand('release', {}, async () => {
			await releaseVersion(event.locals.em, actorOf(event.locals), event.params.slug, number);
		});
		if (failure) return failure;
		redirect(303, `${event.url.pathname}?done=released`);
	}
};
