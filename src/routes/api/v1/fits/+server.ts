import { json } from '@sveltejs/kit';
import { getConfig } from '$lib/server/config';
import { getAppFitQueue } from '$lib/server/jobs/app-queue';
import { requestFit } from '$lib/server/registry/fits';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { FitRequestSchema } from '$lib/server/registry/schemas';
import { jobToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** A small fit answers 200 with its result; a large one 202 with the job to poll. */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const body = await readRegistryJson(event, FitRequestSchema);
		const config = getConfig();
		const { job, background } = await requestFit(event.locals.em, actorOf(event.locals), body, await getAppFitQueue(), {
			bootstrapResamples: config.CANDLEBOOK_BACKGROUND_BOOTSTRAP,
			stars: config.CANDLEBOOK_BACKGROUND_STARS
		});
		const location = `/api/v1/jobs/${job.id}`;
		if (background) return json(jobToWire(job), { status: 202, headers: { location } });
		if (job.state === 'failed') {
			const issues =
				(job.error as { issues?: { star: string | null; field: string; message: string }[] })?.issues ?? [];
			throw new RegistryError(
				422,
				'fit-refused',
				'The engine refused the fit.',
				issues.map((issue) => ({
					path: issue.star ? `${issue.star}/${issue.field}` : issue.field,
					message: issue.message
				})),
				{ job: job.id }
			);
		}
		return json(jobToWire(job), { status: 200, headers: { location } });
	});
