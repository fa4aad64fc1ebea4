import { fail } from '@sveltejs/kit';
import { ACCESS_POLICY } from '$lib/server/auth/access-policy';
import { readerOf } from '$lib/server/registry/http';
import { currentPublicVersions } from '$lib/server/worksheet/relation-choices';
import { readWorksheetForm, runWorksheet, type WorksheetOutcome } from '$lib/server/worksheet/worksheet-run';
import type { Actions, PageServerLoad } from './$types';

/** The raw time-series step needs the light-curve analysis endpoint; it is offered only where that exists. */
const LIGHT_CURVE_ANALYSIS = ACCESS_POLICY.some(
	(rule) => rule.route === '/api/v1/light-curves/analyse' && rule.method === 'POST'
);

export const load: PageServerLoad = async ({ locals }) => ({
	choices: await currentPublicVersions(locals.em),
	lightCurveAnalysis: LIGHT_CURVE_ANALYSIS,
	// The analysis endpoint is for signed-in people; visitors are told so rather than shown a step that fails.
	signedIn: locals.user !== null
});

/** Only what the page shows; the record for the export buttons is rebuilt in the page from these. */
function answer(outcome: WorksheetOutcome) {
	const { fields, csvErrors, fieldErrors, distances, hubble, record } = outcome;
	const body = { fields, csvErrors, fieldErrors, distances, hubble, hubbleRequest: record?.hubbleRequest ?? null };
	return csvErrors.length > 0 || Object.keys(fieldErrors).length > 0 ? fail(400, body) : body;
}

async function submit(event: Parameters<Actions[string]>[0], withHubble: boolean) {
	const { fields, fileError } = await readWorksheetForm(await event.request.formData());
	if (fileError) {
		return fail(400, {
			fields,
			csvErrors: [{ line: 1, column: '', value: '', message: fileError }],
			fieldErrors: {},
			distances: null,
			hubble: null,
			hubbleRequest: null
		});
	}
	return answer(await runWorksheet(event.locals.em, readerOf(event.locals), fields, withHubble));
}

export const actions: Actions = {
	distances: async (event) => submit(event, false),
	hubble: async (event) => submit(event, true)
};
