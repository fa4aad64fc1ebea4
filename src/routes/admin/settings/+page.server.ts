import { fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import { requireRole } from '$lib/server/auth/guards';
import { AuditEvent, User } from '$lib/server/entities/index';
import { actorOf } from '$lib/server/registry/http';
import { getSetting, setSetting } from '$lib/server/registry/settings';
import type { Actions, PageServerLoad } from './$types';

const SettingsForm = z.object({
	default_required_approvals: z
		.number({ error: 'Enter a whole number.' })
		.int('Enter a whole number.')
		.min(1, 'At least one reviewer must approve.')
		.max(10, 'At most 10 approvals.')
});

async function lastChange(em: App.Locals['em'], key: string) {
	const event = await em.findOne(AuditEvent, { kind: 'setting-changed', subject: key }, { orderBy: { id: 'desc' } });
	if (!event) return null;
	const actor = event.actorId ? await em.findOne(User, event.actorId, { fields: ['displayName'] }) : null;
	return {
		at: event.occurredAt.toISOString(),
		by: actor?.displayName ?? (event.actorId ? 'a removed account' : 'the command line')
	};
}

export const load: PageServerLoad = async ({ locals }) => {
	requireRole('admin');
	const current = await getSetting(locals.em, 'default_required_approvals');
	const form = await superValidate({ default_required_approvals: current }, zod4(SettingsForm));
	return { form, lastChanged: await lastChange(locals.em, 'default_required_approvals') };
};

export const actions: Actions = {
	save: async (event) => {
		requireRole('admin');
		const form = await superValidate(event.request, zod4(SettingsForm));
		if (!form.valid) return fail(400, { form });
		const actor = actorOf(event.locals);
		const before = await getSetting(event.locals.em, 'default_required_approvals');
		if (before === form.data.default_required_approvals) return message(form, 'Nothing changed.');
		// The value and its audit event commit together, or neither does.
		await event.locals.em.transactional((tx) =>
			setSetting(tx, actor, 'default_required_approvals', form.data.default_required_approvals)
		);
		return message(form, `Saved: new relations need ${form.data.default_required_approvals} approval(s) by default.`);
	}
};
