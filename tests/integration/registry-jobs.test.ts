import type { MikroORM } from '@mikro-orm/postgresql';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { AnalysisJob } from '../../src/lib/server/entities/index';
import {
	fitQueueOf,
	STAGING_SWEEP_QUEUE,
	startFitWorker,
	startJobQueue,
	startStagingSweeper
} from '../../src/lib/server/jobs/queue';
import type { Actor } from '../../src/lib/server/registry/actor';
import { createCalibratorSet, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { findFitJob, requestFit, runFitJob } from '../../src/lib/server/registry/fits';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { jobToWire } from '../../src/lib/server/registry/wire';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	HOST_FIT,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

let orm: MikroORM;
let boss: PgBoss;
let store: TestObjectStore;
let curator: Actor;
let setSlug: string;

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	boss = await startJobQueue(process.env.DATABASE_URL!);
	const group = await createGroup(orm, 'jobs');
	curator = await createActor(orm, 'curator', ['reader', 'curator'], [{ groupId: group.id, standing: 'member' }]);
	setSlug = unique('jobs-set');
	await createCalibratorSet(orm.em.fork(), curator, {
		slug: setSlug,
		title: 'Invented',
		description: '',
		group: group.slug,
		licence: 'CC0-1.0',
		citations: []
	});
	await uploadRevision(orm.em.fork(), store.storage, curator, setSlug, {
		bytes: new TextEncoder().encode(hostCalibratorCsv()),
		mediaType: 'text/csv',
		fileName: 'host.csv',
		mapping: {},
		note: ''
	});
});

afterAll(async () => {
	await boss.stop({ graceful: false, wait: true });
	await store.close();
	await orm.close(true);
});

const request = (extra: Record<string, unknown>) =>
	FitRequestSchema.parse({ calibrator_set: setSlug, revision: 1, ...HOST_FIT, ...extra });

describe('background fits on pg-boss', () => {
	test('a small fit runs in the request; a large bootstrap is queued and a worker finishes it with progress', async () => {
		const queue = fitQueueOf(boss);
		const small = await requestFit(orm.em.fork(), curator, request({}), queue);
		expect(small.background).toBe(false);
		expect(small.job.state).toBe('succeeded');

		const large = await requestFit(orm.em.fork(), curator, request({ bootstrap: { resamples: 200, seed: 42 } }), queue);
		expect(large.background).toBe(true);
		expect(large.job.queueJobId).toMatch(/^[0-9a-f-]{36}$/);
		expect(jobToWire(large.job)).toMatchObject({ state: 'queued', progress: 0, result: null });

		await startFitWorker(boss, orm, 0.5);
		let job = await findFitJob(orm.em.fork(), curator, large.job.id);
		for (let i = 0; i < 100 && job.state !== 'succeeded' && job.state !== 'failed'; i++) {
			await new Promise((resolve) => setTimeout(resolve, 200));
			job = await findFitJob(orm.em.fork(), curator, large.job.id);
		}
		const wire = jobToWire(job);
		expect(wire).toMatchObject({ state: 'succeeded', progress: 1, stage: 'done' });
		expect(wire.result?.bootstrap).toMatchObject({ resamples: 200, seed: 42 });
		// The same spec and seed give the same numbers: a fit is deterministic.
		const again = await requestFit(orm.em.fork(), curator, request({ bootstrap: { resamples: 200, seed: 42 } }), null);
		expect(jobToWire(again.job).result?.bootstrap).toEqual(wire.result?.bootstrap);
	});

	test('a fit the engine refuses fails with its issues; a redelivered job is left alone', async () => {
		const { job } = await requestFit(
			orm.em.fork(),
			curator,
			request({ anchor: 'parallax', method: 'wls', clipping: null }),
			null
		);
		expect(job.state).toBe('failed');
		const error = job.error as { issues: { field: string; message: string }[] };
		expect(error.issues.some((issue) => issue.field === 'parallaxMas')).toBe(true);
		await runFitJob(orm.em.fork(), job.id);
		expect((await orm.em.fork().findOneOrFail(AnalysisJob, job.id)).finishedAt).toEqual(job.finishedAt);
	});

	test('jobs are visible to the person who asked for them only', async () => {
		const other = await createActor(orm, 'other', ['reader', 'curator']);
		const { job } = await requestFit(orm.em.fork(), curator, request({}), null);
		await expect(findFitJob(orm.em.fork(), other, job.id)).rejects.toMatchObject({ status: 404 });
	});

	test('the hourly sweep of abandoned staged uploads is scheduled once on the shared queue', async () => {
		await startStagingSweeper(boss, () => store.storage);
		await startStagingSweeper(boss, () => store.storage);
		const schedules = (await boss.getSchedules()).filter((entry) => entry.name === STAGING_SWEEP_QUEUE);
		expect(schedules.map((entry) => entry.cron)).toEqual(['17 * * * *']);
	});
});
