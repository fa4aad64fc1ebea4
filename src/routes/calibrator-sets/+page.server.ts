import { listCalibratorSets } from '$lib/server/calibrator-pages/catalogue';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => ({
	sets: await listCalibratorSets(locals.em),
	canCreate: locals.user?.roles.includes('curator') ?? false
});
