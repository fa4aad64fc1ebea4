import PgBoss from 'pg-boss';
import type { MikroORM } from '@mikro-orm/postgresql';
import { logger } from '../logger';
import { runFitJob, type FitQueue } from '../registry/fits';
import { deliverHeldMail } from '../registry/notifications';
import { runLightCurveJob, type LightCurveQueue } from '../light-curves/jobs';
import type { ObjectStorage } from '../storage/object-storage';
import { sweepStagedFiles } from '../storage/staging-sweep';

/**
 * The background job queue: pg-boss in the application's own PostgreSQL (schema `pgboss`). The app
 * queues large fits; any process running a worker (the app itself, or `src/lib/server/jobs/worker.ts`
 * on another machine) picks them up. Later analyses add their own queues here.
 */
export const FIT_QUEUE = 'candlebook-fit';
export const LIGHT_CURVE_QUEUE = 'candlebook-light-curves';
export const STAGING_SWEEP_QUEUE = 'candlebook-staging-sweep';
/** Hourly, at a minute past nothing else in particular; pg-boss runs a schedule once across all workers. */
const STAGING_SWEEP_CRON = '17 * * * *';
export const HELD_MAIL_QUEUE = 'candlebook-held-mail';
/** Every ten minutes: mail held by an embargo goes out soon after the embargo's date passes. */
const HELD_MAIL_CRON = '*/10 * * * *';

export interface FitMessage {
	jobId: string;
}

const QUEUES = [FIT_QUEUE, LIGHT_CURVE_QUEUE, STAGING_SWEEP_QUEUE, HELD_MAIL_QUEUE];
const SCHEMA = 'pgboss';

/**
 * Creates or upgrades pg-boss's schema and creates the queues, as the owner role: each queue is a
 * table of its own, and the runtime role creates no tables. Run with the migrations.
 */
export async function prepareJobQueue(ownerUrl: string): Promise<void> {
	const boss = new PgBoss({ connectionString: ownerUrl, schema: SCHEMA, max: 1, supervise: false, schedule: false });
	await boss.start();
	try {
		for (const queue of QUEUES) await boss.createQueue(queue);
	} finally {
		await boss.stop({ graceful: false, wait: true });
	}
}

/** The queue as the runtime role: the schema and queues must already be there (prepareJobQueue). */
export async function startJobQueue(databaseUrl: string): Promise<PgBoss> {
	const boss = new PgBoss({ connectionString: databaseUrl, schema: SCHEMA, max: 4, migrate: false });
	boss.on('error', (error) => logger.error({ err: error }, 'job queue error'));
	await boss.start().catch((error: unknown) => {
		throw new Error(
			`the job queue's schema "${SCHEMA}" is missing or out of date (${(error as Error).message}): ` +
				'run the migrations as the owner role (`npm run migrate`)',
			{ cause: error }
		);
	});
	// Already there, so this only checks: creating a missing one would need the owner role.
	for (const queue of QUEUES) await boss.createQueue(queue);
	return boss;
}

export function fitQueueOf(boss: PgBoss): FitQueue {
	return {
		enqueueFit: (jobId) =>
			boss.send(FIT_QUEUE, { jobId } satisfies FitMessage, { retryLimit: 2, retryDelay: 5, expireInMinutes: 60 })
	};
}

/** Works fit messages one at a time; the job row carries state, progress and result. */
export async function startFitWorker(boss: PgBoss, orm: MikroORM, pollingIntervalSeconds = 2): Promise<string> {
	return boss.work<FitMessage>(FIT_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async (jobs) => {
		for (const job of jobs) {
			logger.info({ jobId: job.data.jobId }, 'fit started');
			await runFitJob(orm.em.fork(), job.data.jobId);
			logger.info({ jobId: job.data.jobId }, 'fit finished');
		}
	});
}

export function lightCurveQueueOf(boss: PgBoss): LightCurveQueue {
	return {
		enqueueLightCurves: (jobId) =>
			boss.send(LIGHT_CURVE_QUEUE, { jobId } satisfies FitMessage, {
				retryLimit: 2,
				retryDelay: 5,
				expireInMinutes: 120
			})
	};
}

/** Works light-curve messages one at a time; the job row carries state, progress per series and result. */
export async function startLightCurveWorker(
	boss: PgBoss,
	orm: MikroORM,
	storage: () => ObjectStorage,
	pollingIntervalSeconds = 2
): Promise<string> {
	return boss.work<FitMessage>(LIGHT_CURVE_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async (jobs) => {
		for (const job of jobs) {
			logger.info({ jobId: job.data.jobId }, 'light-curve analysis started');
			await runLightCurveJob(orm.em.fork(), job.data.jobId, storage);
			logger.info({ jobId: job.data.jobId }, 'light-curve analysis finished');
		}
	});
}

/** Removes the upload wizard's abandoned staged files every hour (see staging-sweep.ts). */
export async function startStagingSweeper(boss: PgBoss, storage: () => ObjectStorage): Promise<string> {
	await boss.schedule(STAGING_SWEEP_QUEUE, STAGING_SWEEP_CRON);
	return boss.work(STAGING_SWEEP_QUEUE, { batchSize: 1 }, async () => {
		const swept = await sweepStagedFiles(storage());
		logger.info(swept, 'staged upload files swept');
	});
}

/** Sends mail held for watchers outside a group once the embargo that held it has ended. */
export async function startHeldMailSender(boss: PgBoss, orm: MikroORM): Promise<string> {
	await boss.schedule(HELD_MAIL_QUEUE, HELD_MAIL_CRON);
	return boss.work(HELD_MAIL_QUEUE, { batchSize: 1 }, async () => {
		const sent = await deliverHeldMail(orm.em.fork());
		if (sent > 0) logger.info({ sent }, 'held mail sent after embargoes ended');
	});
}
