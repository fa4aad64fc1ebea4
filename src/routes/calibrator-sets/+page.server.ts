import { listCalibratorSets } from '$lib/server/calibrator-pages/catalogue';
import { readerOf } from '$lib/server/registry/http';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => ({
	sets: await listCalibratorSets(locals.em, readerOf(locals)),
	canCreate: locals.user?.roles.includes('curator') ?? false
});
