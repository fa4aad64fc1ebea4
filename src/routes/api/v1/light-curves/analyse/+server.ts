import { json } from '@sveltejs/kit';
import { getAppLightCurveQueue } from '$lib/server/jobs/app-queue';
import { BatchRefusedError } from '$lib/server/light-curves/analysis';
import { batchRefusal, readAnalyseRequest } from '$lib/server/light-curves/http';
import { requestAnalysis } from '$lib/server/light-curves/jobs';
import { lightCurveJobToWire } from '$lib/server/light-curves/wire';
import { actorOf, registryResponse } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/**
 * Analyses light curves. Up to 10 series and 20 000 points answer 200 with the results; a larger
 * batch answers 202 with a job to poll at its Location (progress per series).
 */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const actor = actorOf(event.locals);
		const request = await readAnalyseRequest(event);
		try {
			const outcome = await requestAnalysis(event.locals.em, actor, request, {
				enqueueLightCurves: async (jobId) => (await getAppLightCurveQueue()).enqueueLightCurves(jobId)
			});
			if (outcome.kind === 'done') return json(outcome.body, { headers: { 'cache-control': 'no-store' } });
			return json(lightCurveJobToWire(outcome.job), {
				status: 202,
				headers: { location: `/api/v1/jobs/${outcome.job.id}`, 'cache-control': 'no-store' }
			});
		} catch (error) {
			if (error instanceof BatchRefusedError) throw batchRefusal(error);
			throw error;
		}
	});
