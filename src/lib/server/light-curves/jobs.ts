import type { EntityManager } from '@mikro-orm/postgresql';
import { AnalysisJob, type AnalysisJobEntity } from '../entities/analysis-job.entity';
import { LightCurveResult } from '../entities/light-curve-result.entity';
import { LightCurveUpload } from '../entities/light-curve-upload.entity';
import type { Actor } from '../registry/actor';
import { notFound } from '../registry/errors';
import type { ObjectStorage } from '../storage/object-storage';
import type { AnalyseRequest } from '../api/light-curve-schemas';
import {
	analyseBatch,
	BatchRefusedError,
	checkBatch,
	ENGINE_VERSION,
	type AnalysedSeries,
	type BatchSeries
} from './analysis';
import { seriesOfUpload } from './uploads';
import { analysisToWire, coverageToWire } from './wire';

/**
 * Light-curve analyses as jobs. A small analyse request runs inside the request; a large one, and
 * every upload, is queued on pg-boss and a worker analyses one series after another, writing the
 * progress (per star and band) to the job row as it goes.
 */

/** Larger than either of these, an analyse request answers 202 with a job. */
export const SYNCHRONOUS_LIMITS = { series: 10, points: 20_000 } as const;

export interface LightCurveQueue {
	enqueueLightCurves(jobId: string): Promise<string | null>;
}

export type LightCurveJobInput =
	{ source: 'request'; request: AnalyseRequest } | { source: 'upload'; upload_id: string };

export function runsInBackground(request: AnalyseRequest): boolean {
	const points = request.series.reduce((sum, series) => sum + series.points.length, 0);
	return request.series.length > SYNCHRONOUS_LIMITS.series || points > SYNCHRONOUS_LIMITS.points;
}

export function batchOfRequest(request: AnalyseRequest): BatchSeries[] {
	return request.series.map((series) => ({
		id: series.id,
		band: series.band ?? null,
		timeReference: series.time_reference,
		timeOffsetDays: series.time_offset_days,
		population: series.population,
		points: series.points
	}));
}

export const batchResultToWire = (analysed: AnalysedSeries[]) => ({
	engine_version: ENGINE_VERSION,
	results: analysed.map((entry) => analysisToWire(entry.analysis, entry.model, entry.series.population))
});

export type AnalyseOutcome =
	{ kind: 'done'; body: ReturnType<typeof batchResultToWire> } | { kind: 'queued'; job: AnalysisJobEntity };

/** Analyses a small request now; records and queues a large one (refusing a bad batch before either). */
export async function requestAnalysis(
	em: EntityManager,
	actor: Actor,
	request: AnalyseRequest,
	queue: LightCurveQueue
): Promise<AnalyseOutcome> {
	const batch = batchOfRequest(request);
	const options = { minPeriodDays: request.min_period_days, maxPeriodDays: request.max_period_days };
	if (!runsInBackground(request)) return { kind: 'done', body: batchResultToWire(await analyseBatch(batch, options)) };
	checkBatch(batch);
	const job = em.create(AnalysisJob, {
		kind: 'light_curves',
		requestedBy: actor.id,
		input: { source: 'request', request } satisfies LightCurveJobInput as unknown as Record<string, unknown>,
		state: 'queued',
		progress: 0,
		stage: `queued: ${batch.length} series`
	});
	await em.flush();
	job.queueJobId = await queue.enqueueLightCurves(job.id);
	await em.flush();
	return { kind: 'queued', job };
}

const update = (em: EntityManager, id: string, fields: Partial<AnalysisJobEntity>) =>
	em.nativeUpdate(AnalysisJob, { id }, fields);

/** 5 % for reading, 90 % spread over the series, the rest for storing. */
const progressAt = (done: number, total: number) => Math.round(5 + (90 * done) / Math.max(total, 1));

/**
 * Runs one queued light-curve job and stores its result or its refusal. Idempotent: a finished job is
 * left alone, so a redelivered message does no harm. An upload's results are written in one
 * transaction after every series is analysed: a failure leaves none.
 */
export async function runLightCurveJob(em: EntityManager, jobId: string, storage: () => ObjectStorage): Promise<void> {
	const job = await em.findOne(AnalysisJob, jobId);
	if (!job) throw notFound(`analysis job ${jobId}`);
	if (job.state === 'succeeded' || job.state === 'failed') return;
	await update(em, jobId, { state: 'running', progress: 2, stage: 'reading the light curves', startedAt: new Date() });
	const input = job.input as unknown as LightCurveJobInput;
	const report = async (done: number, total: number, next: BatchSeries | null) => {
		const stage = next
			? `analysing ${next.id}${next.band ? ` (${next.band})` : ''}: ${done + 1} of ${total}`
			: `storing ${total} results`;
		await update(em, jobId, { progress: progressAt(done, total), stage: stage.slice(0, 100) });
	};
	try {
		let result: Record<string, unknown>;
		if (input.source === 'request') {
			const options = { minPeriodDays: input.request.min_period_days, maxPeriodDays: input.request.max_period_days };
			result = batchResultToWire(await analyseBatch(batchOfRequest(input.request), options, report));
		} else {
			const upload = await em.findOneOrFail(LightCurveUpload, input.upload_id);
			const batch = seriesOfUpload(upload, await storage().get(upload.sourceKey));
			const analysed = await analyseBatch(
				batch,
				{
					minPeriodDays: upload.minPeriodDays === null ? undefined : Number(upload.minPeriodDays),
					maxPeriodDays: upload.maxPeriodDays === null ? undefined : Number(upload.maxPeriodDays)
				},
				report
			);
			await em.transactional(async (tx) => {
				analysed.forEach((entry, position) => tx.create(LightCurveResult, resultRow(upload.id, position, entry)));
			});
			result = { upload_id: upload.id, results: analysed.length, engine_version: ENGINE_VERSION };
		}
		await update(em, jobId, { state: 'succeeded', progress: 100, stage: 'done', result, finishedAt: new Date() });
	} catch (error) {
		const refusal =
			error instanceof BatchRefusedError
				? {
						message: 'The engine refused the light curves.',
						issues: error.issues.map((issue) => ({
							path: `${issue.index === null ? '' : `series[${issue.index}].`}${issue.field}`,
							message: issue.message
						}))
					}
				: { message: 'The analysis failed unexpectedly.', issues: [] };
		await update(em, jobId, {
			state: 'failed',
			progress: 100,
			stage: 'failed',
			error: refusal,
			finishedAt: new Date()
		});
		if (!(error instanceof BatchRefusedError)) throw error;
	}
}

function resultRow(uploadId: string, position: number, { series, analysis, model, periodogram }: AnalysedSeries) {
	const finiteOrNull = (value: number) => (Number.isFinite(value) ? value : null);
	return {
		upload: uploadId,
		position,
		star: series.id,
		band: series.band ?? null,
		population: series.population,
		timeFrame: analysis.timeFrame,
		nPoints: analysis.nPoints,
		baselineDays: analysis.baselineDays,
		periodDays: analysis.periodDays,
		periodErrDays: analysis.periodErrDays,
		falseAlarmProbability: analysis.falseAlarmProbability,
		peakPower: analysis.peakPower,
		amplitude: analysis.amplitude,
		epochOfMaximum: analysis.epochOfMaximum,
		meanMagIntensity: analysis.meanMagIntensity.value,
		meanMagIntensityErr: analysis.meanMagIntensity.error,
		meanMagMagnitude: analysis.meanMagMagnitude.value,
		meanMagMagnitudeErr: analysis.meanMagMagnitude.error,
		fourierOrder: analysis.fourierOrder,
		fourierCoefficients: model.coefficients,
		fourierShape: analysis.fourier as unknown as Record<string, unknown>,
		reducedChiSquare: finiteOrNull(analysis.reducedChiSquare),
		residualRms: analysis.residualRms,
		periodogramMethod: analysis.periodogramMethod,
		phaseCoverage: coverageToWire(analysis.phaseCoverage),
		aliases: analysisToWire(analysis, model, series.population).aliases,
		warnings: analysisToWire(analysis, model, series.population).warnings,
		periodogram,
		engineVersion: ENGINE_VERSION
	};
}

/** A light-curve job of the caller (any job for an admin); 404 otherwise. */
export async function findLightCurveJob(em: EntityManager, actor: Actor, id: string) {
	const job = await em.findOne(
		AnalysisJob,
		actor.roles.includes('admin') ? { id, kind: 'light_curves' } : { id, kind: 'light_curves', requestedBy: actor.id }
	);
	if (!job) throw notFound(`job ${id}`);
	return job;
}
