import type PgBoss from 'pg-boss';
import { getConfig } from '../config';
import { getOrm } from '../db';
import type { FitQueue } from '../registry/fits';
import type { LightCurveQueue } from '../light-curves/jobs';
import { getObjectStorage } from '../storage/app-storage';
import {
	fitQueueOf,
	lightCurveQueueOf,
	startFitWorker,
	startHeldMailSender,
	startJobQueue,
	startLightCurveWorker,
	startStagingSweeper
} from './queue';

let boss: Promise<PgBoss> | undefined;

/**
 * The app's job queue, started on first use. Unless CANDLEBOOK_IN_PROCESS_WORKER is `false`, the app
 * also works the queue itself, so a single machine needs no separate worker process.
 */
export function getAppJobQueue(): Promise<PgBoss> {
	boss ??= (async () => {
		const config = getConfig();
		const started = await startJobQueue(config.DATABASE_URL);
		if (config.CANDLEBOOK_IN_PROCESS_WORKER === 'true') {
			await startFitWorker(started, await getOrm());
			await startLightCurveWorker(started, await getOrm(), getObjectStorage);
			await startStagingSweeper(started, getObjectStorage);
			await startHeldMailSender(started, await getOrm());
		}
		return started;
	})().catch((error: unknown) => {
		// A database that was away must not leave the queue broken for the life of the process.
		boss = undefined;
		throw error;
	});
	return boss;
}

export async function getAppFitQueue(): Promise<FitQueue> {
	return fitQueueOf(await getAppJobQueue());
}

export async function getAppLightCurveQueue(): Promise<LightCurveQueue> {
	return lightCurveQueueOf(await getAppJobQueue());
}

export async function stopAppJobQueue(): Promise<void> {
	if (!boss) return;
	const current = boss;
	boss = undefined;
	await (await current).stop({ graceful: true, timeout: 10_000 });
}
