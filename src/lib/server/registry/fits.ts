import type { EntityManager } from '@mikro-orm/postgresql';
import {
	CalibrationInputError,
	runRefit,
	toCalibratorRows,
	type RefitResult,
	type RefitSpec
} from '../../calibration/index';
import { AnalysisJob, type AnalysisJobEntity } from '../entities/analysis-job.entity';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { seesAllAsAdmin, type Actor } from './actor';
import { canSeeCalibratorSet } from './calibrator-set-reads';
import { findRevision, revisionRows } from './calibrator-sets';
import { notFound } from './errors';
import type { FitRequest } from './schemas';

/**
 * Fits: a spec against a stored calibrator revision → the engine → a stored result. Small fits run in
 * the request; a large bootstrap or calibrator list goes to the job queue and a worker runs it.
 */
export interface BackgroundThresholds {
	/** A bootstrap with at least this many resamples runs in the background. */
	bootstrapResamples: number;
	/** A revision with at least this many stars runs in the background. */
	stars: number;
}

export const DEFAULT_BACKGROUND_THRESHOLDS: BackgroundThresholds = { bootstrapResamples: 200, stars: 5000 };

/** Something that can queue a fit for a worker (pg-boss in the app, a stub in tests). */
export interface FitQueue {
	enqueueFit(jobId: string): Promise<string | null>;
}

export function specFromRequest(request: FitRequest): RefitSpec {
	return {
		bandId: request.band,
		population: request.population,
		anchor: request.anchor,
		form: request.form,
		method: request.method,
		pivotLogPeriod: request.pivot_log_period,
		pivotFeh: request.pivot_feh,
		periodFilter: {
			logPeriodMin: request.period_filter.log_period_min,
			logPeriodMax: request.period_filter.log_period_max
		},
		fundamentalise: request.fundamentalise,
		fixedSlope: request.fixed_slope,
		fixedZeroPoint: request.fixed_zero_point,
		clipping: request.clipping
			? { sigma: request.clipping.sigma, maxIterations: request.clipping.max_iterations }
			: null,
		extinctionLaw: request.extinction_law,
		rV: request.r_v,
		parallaxOffset: request.parallax_offset,
		bootstrap: request.bootstrap,
		weightedCovariance:
			request.weighted_covariance ?? (request.method === 'wls' ? 'reduced_chi_square_above_one' : 'absolute'),
		assumedIntrinsicScatter: request.assumed_intrinsic_scatter,
		intrinsicScatterEstimator: request.method === 'ml_scatter' ? (request.intrinsic_scatter_estimator ?? 'reml') : null,
		fixedSlopeError: request.fixed_slope_error,
		wesenheitRatio: request.wesenheit_ratio
	};
}

export function runsInBackground(
	request: FitRequest,
	rowCount: number,
	thresholds: BackgroundThresholds = DEFAULT_BACKGROUND_THRESHOLDS
): boolean {
	return (request.bootstrap?.resamples ?? 0) >= thresholds.bootstrapResamples || rowCount >= thresholds.stars;
}

export interface FitInput {
	request: FitRequest;
	calibratorRevisionId: string;
}

export interface FitOutcome {
	job: AnalysisJobEntity;
	background: boolean;
}

/** Records the fit and either runs it now or queues it. */
export async function requestFit(
	em: EntityManager,
	actor: Actor,
	request: FitRequest,
	queue: FitQueue | null,
	thresholds: BackgroundThresholds = DEFAULT_BACKGROUND_THRESHOLDS
): Promise<FitOutcome> {
	const { set, revision } = await findRevision(em, request.calibrator_set, request.revision);
	// A set private to its group is fitted only by those who may see it; others get the same 404.
	if (!(await canSeeCalibratorSet(em, actor, set))) throw notFound(`calibrator set called ${request.calibrator_set}`);
	const background = queue !== null && runsInBackground(request, revision.rowCount, thresholds);
	const input: FitInput = { request, calibratorRevisionId: revision.id };
	const job = em.create(AnalysisJob, {
		kind: 'fit',
		requestedBy: actor.id,
		input: input as unknown as Record<string, unknown>,
		state: 'queued',
		progress: 0,
		stage: 'queued'
	});
	await em.flush();
	if (!background) {
		await runFitJob(em, job.id);
		await em.refresh(job);
		return { job, background };
	}
	const queueJobId = await queue.enqueueFit(job.id);
	job.queueJobId = queueJobId;
	await em.flush();
	return { job, background };
}

async function setProgress(em: EntityManager, id: string, fields: Partial<AnalysisJobEntity>) {
	await em.nativeUpdate(AnalysisJob, { id }, fields);
}

/**
 * Runs one queued fit and stores its result or its refusal. Idempotent: a job that already finished
 * is left alone, so a redelivered queue message does no harm.
 */
export async function runFitJob(em: EntityManager, jobId: string): Promise<void> {
	const job = await em.findOne(AnalysisJob, jobId);
	if (!job) throw notFound(`analysis job ${jobId}`);
	if (job.state === 'succeeded' || job.state === 'failed') return;
	await setProgress(em, jobId, { state: 'running', progress: 5, stage: 'reading calibrators', startedAt: new Date() });
	const input = job.input as unknown as FitInput;
	try {
		const revision = await em.findOneOrFail(CalibratorRevision, input.calibratorRevisionId);
		const rows = toCalibratorRows(revisionRows(revision));
		await setProgress(em, jobId, {
			progress: 20,
			stage: input.request.bootstrap ? `fitting, ${input.request.bootstrap.resamples} bootstrap resamples` : 'fitting'
		});
		const result = runRefit(rows, specFromRequest(input.request));
		await setProgress(em, jobId, {
			state: 'succeeded',
			progress: 100,
			stage: 'done',
			result: toJson(result),
			finishedAt: new Date()
		});
	} catch (error) {
		const refusal =
			error instanceof CalibrationInputError
				? { message: 'The engine refused the fit.', issues: error.issues }
				: { message: 'The fit failed unexpectedly.', issues: [] };
		await setProgress(em, jobId, {
			state: 'failed',
			progress: 100,
			stage: 'failed',
			error: refusal,
			finishedAt: new Date()
		});
		if (!(error instanceof CalibrationInputError)) throw error;
	}
}

/** JSON has no Infinity or NaN; the engine never emits them in a result, but a stored row must not lie. */
function toJson(result: RefitResult): Record<string, unknown> {
	return JSON.parse(JSON.stringify(result)) as Record<string, unknown>;
}

/**
 * A job of the actor's (anyone's for an admin), or 404. A fit shows the rows of its calibrator set, so
 * it is also hidden while the actor may not see that set (a token without read:private, someone who
 * has left the set's group). Proposals add their own rule: see findVisibleFitJob.
 */
export async function findFitJob(em: EntityManager, actor: Actor, id: string) {
	const job = await em.findOne(AnalysisJob, seesAllAsAdmin(actor) ? { id } : { id, requestedBy: actor.id });
	if (!job || !(await fitSetVisible(em, actor, job))) throw notFound(`job ${id}`);
	return job;
}

async function fitSetVisible(em: EntityManager, actor: Actor, job: AnalysisJobEntity): Promise<boolean> {
	if (job.kind !== 'fit') return true;
	const revision = await em.findOne(CalibratorRevision, fitInputOf(job).calibratorRevisionId, {
		fields: ['calibratorSet']
	});
	const set = revision ? await em.findOne(CalibratorSet, revision.calibratorSet.id) : null;
	return !!set && canSeeCalibratorSet(em, actor, set);
}

export function fitResultOf(job: AnalysisJobEntity): RefitResult | null {
	return job.state === 'succeeded' && job.result ? (job.result as unknown as RefitResult) : null;
}

export function fitInputOf(job: AnalysisJobEntity): FitInput {
	return job.input as unknown as FitInput;
}
