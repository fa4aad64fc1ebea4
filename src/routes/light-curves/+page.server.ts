import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { POPULATION_IDS, TIME_REFERENCES } from '$lib/calibration';
import { requireUser } from '$lib/server/auth/guards';
import { getAppLightCurveQueue } from '$lib/server/jobs/app-queue';
import { DEFAULT_UPLOAD_LIMITS, listUploads, uploadLightCurves } from '$lib/server/light-curves/uploads';
import { RegistryError } from '$lib/server/registry/errors';
import { getObjectStorage } from '$lib/server/storage/app-storage';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	const user = requireUser();
	return {
		uploads: await listUploads(locals.em, { id: user.id, displayName: user.displayName, roles: user.roles }),
		timeReferences: [...TIME_REFERENCES],
		populations: [...POPULATION_IDS],
		maxBytes: DEFAULT_UPLOAD_LIMITS.maxBytes
	};
};

const FormSchema = z.object({
	time_reference: z.enum(TIME_REFERENCES, { error: 'Choose the time reference of the file.' }),
	time_offset_days: z.string().trim().max(30).default('0'),
	star: z.string().trim().max(100).default(''),
	band: z.string().trim().max(20).default(''),
	population: z.enum(POPULATION_IDS).default('classical_fundamental')
});

const MEDIA_TYPES: Record<string, string> = {
	csv: 'text/csv',
	tsv: 'text/tab-separated-values',
	tab: 'text/tab-separated-values',
	txt: 'text/tab-separated-values'
};

export const actions: Actions = {
	default: async ({ request, locals }) => {
		const user = requireUser();
		const form = await request.formData();
		const values = Object.fromEntries(
			['time_reference', 'time_offset_days', 'star', 'band', 'population'].map((key) => [
				key,
				String(form.get(key) ?? '')
			])
		);
		const file = form.get('file');
		if (!(file instanceof File) || file.size === 0) {
			return fail(400, { values, errors: { file: ['Choose a CSV or TSV file.'] }, issues: [] });
		}
		const parsed = FormSchema.safeParse(Object.fromEntries(Object.entries(values).filter(([, value]) => value !== '')));
		if (!parsed.success) {
			const errors: Record<string, string[]> = {};
			for (const issue of parsed.error.issues) (errors[String(issue.path[0])] ??= []).push(issue.message);
			return fail(400, { values, errors, issues: [] });
		}
		const extension = file.name.split('.').pop()?.toLowerCase() ?? '';
		const mediaType =
			file.type === 'text/csv' || file.type === 'text/tab-separated-values'
				? file.type
				: (MEDIA_TYPES[extension] ?? 'text/csv');
		let id: string;
		try {
			const upload = await uploadLightCurves(
				locals.em,
				getObjectStorage(),
				{ id: user.id, displayName: user.displayName, roles: user.roles },
				{
					bytes: new Uint8Array(await file.arrayBuffer()),
					mediaType,
					fileName: file.name || 'light-curves',
					timeReference: parsed.data.time_reference,
					timeOffsetDays: parsed.data.time_offset_days,
					mapping: {},
					star: parsed.data.star || null,
					band: parsed.data.band || null,
					population: parsed.data.population
				},
				await getAppLightCurveQueue()
			);
			id = upload.id;
		} catch (error) {
			if (!(error instanceof RegistryError)) throw error;
			const issues =
				(error.extra.issues as
					{ line: number | null; column: string | null; value: string | null; reason: string }[] | undefined) ?? [];
			return fail(error.status, { values, errors: { file: [error.message] }, issues });
		}
		redirect(303, `/light-curves/${id}`);
	}
};
