import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { MikroORM } from '@mikro-orm/postgresql';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { AnalysisJob, LightCurveResult, LightCurveUpload } from '../../src/lib/server/entities/index';
import { lightCurveQueueOf, startJobQueue, startLightCurveWorker } from '../../src/lib/server/jobs/queue';
import { AnalyseRequestSchema } from '../../src/lib/server/api/light-curve-schemas';
import { requestAnalysis } from '../../src/lib/server/light-curves/jobs';
import {
	findUpload,
	SOURCE_PREFIX,
	uploadLightCurves,
	type LightCurveUploadInput
} from '../../src/lib/server/light-curves/uploads';
import { uploadToWire } from '../../src/lib/server/light-curves/wire';
import type { Actor } from '../../src/lib/server/registry/actor';
import { startLocalObjectServer } from '../../src/lib/server/storage/local-object-server';
import { contentAddress, ObjectStorage } from '../../src/lib/server/storage/object-storage';
import { openTestOrm } from '../support/database';
import { INVENTED_STARS, inventedPoints, inventedUploadCsv } from '../support/light-curves';
import { createActor, startTestObjectStore, type TestObjectStore } from '../support/registry';

let orm: MikroORM;
let boss: PgBoss;
let store: TestObjectStore;
let observer: Actor;

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	boss = await startJobQueue(process.env.DATABASE_URL!);
	observer = await createActor(orm, 'observer', ['reader']);
	await startLightCurveWorker(boss, orm, () => store.storage, 0.5);
});

afterAll(async () => {
	await boss.stop({ graceful: false, wait: true });
	await store.close();
	await orm.close(true);
});

const input = (text: string, extra: Partial<LightCurveUploadInput> = {}): LightCurveUploadInput => ({
	bytes: new TextEncoder().encode(text),
	mediaType: 'text/csv',
	fileName: 'kestrel-light-curves.csv',
	timeReference: 'MJD',
	timeOffsetDays: '50000',
	mapping: {},
	star: null,
	band: null,
	population: 'classical_fundamental',
	...extra
});

/** Polls a job until it finishes, recording every progress value seen on the way. */
async function watchJob(id: string) {
	const seen: number[] = [];
	let job = await load(id);
	for (let i = 0; i < 600 && job.state !== 'succeeded' && job.state !== 'failed'; i++) {
		if (seen.at(-1) !== job.progress) seen.push(job.progress);
		await new Promise((resolve) => setTimeout(resolve, 25));
		job = await load(id);
	}
	seen.push(job.progress);
	return { job, seen };
}
const load = (id: string) => orm.em.fork().findOneOrFail(AnalysisJob, id);

describe('light-curve uploads: store, queue, analyse, results', () => {
	test('an upload is stored by content address, analysed in the background with rising progress, and read back per star and band', async () => {
		const text = inventedUploadCsv();
		const upload = await uploadLightCurves(
			orm.em.fork(),
			store.storage,
			observer,
			input(text),
			lightCurveQueueOf(boss)
		);
		const address = contentAddress(SOURCE_PREFIX, new TextEncoder().encode(text));
		expect(upload.sourceKey).toBe(address.key);
		expect(await store.storage.exists(address.key)).toBe(true);
		expect(upload.series).toHaveLength(6);
		expect(upload.starCount).toBe(3);

		const { job, seen } = await watchJob(upload.analysisJob!.id);
		expect({ state: job.state, error: job.error }).toEqual({ state: 'succeeded', error: null });
		// Progress moves per series, never backwards, and is seen between start and end.
		expect(seen).toEqual([...seen].sort((a, b) => a - b));
		expect(seen.some((value) => value > 5 && value < 95)).toBe(true);
		expect(seen.at(-1)).toBe(100);

		const found = await findUpload(orm.em.fork(), observer, upload.id);
		const wire = uploadToWire(found.upload, found.results, found.job);
		expect(wire.results.map((result) => `${result.id}/${result.band}`)).toEqual(
			INVENTED_STARS.flatMap((star) => [`${star.star}/V`, `${star.star}/Ic`])
		);
		for (const result of wire.results) {
			// Truth: the period each invented curve was generated with.
			const truth = INVENTED_STARS.find((star) => star.star === result.id)!.periodDays;
			expect(Math.abs(result.period_days - truth)).toBeLessThan(Math.max(5 * result.period_err_days, 1e-4));
			expect(result.time_frame).toBe('JD');
			expect(result.engine_version).toMatch(/^\d+\.\d+\.\d+$/);
			expect(result.fourier_coefficients).toHaveLength(2 * result.fourier_order + 1);
		}
		expect(wire.job).toMatchObject({ state: 'succeeded', progress: 1 });
	});

	test('a bad file is refused with line, column and value, and leaves no row, no job and no object', async () => {
		const lines = inventedUploadCsv().split('\n');
		lines[17] = lines[17].replace(/,0\.01$/, ',-0.01');
		const text = lines.join('\n');
		const before = await orm.em.fork().count(LightCurveUpload, {});
		const jobsBefore = await orm.em.fork().count(AnalysisJob, { kind: 'light_curves' });
		await expect(
			uploadLightCurves(orm.em.fork(), store.storage, observer, input(text), lightCurveQueueOf(boss))
		).rejects.toMatchObject({
			status: 422,
			extra: { issues: [expect.objectContaining({ line: 18, column: 'error', value: '-0.01' })] }
		});
		expect(await orm.em.fork().count(LightCurveUpload, {})).toBe(before);
		expect(await orm.em.fork().count(AnalysisJob, { kind: 'light_curves' })).toBe(jobsBefore);
		expect(await store.storage.exists(contentAddress(SOURCE_PREFIX, new TextEncoder().encode(text)).key)).toBe(false);
	});

	test('an upload whose object cannot be stored leaves no row and no job behind', async () => {
		const text = inventedUploadCsv(INVENTED_STARS.slice(0, 1));
		const before = await orm.em.fork().count(LightCurveUpload, {});
		const jobsBefore = await orm.em.fork().count(AnalysisJob, { kind: 'light_curves' });
		// A real S3 server whose bucket is missing: the existence check answers "not there", the write fails.
		const directory = mkdtempSync(join(tmpdir(), 'candlebook-lc-s3-'));
		const server = await startLocalObjectServer(directory, 'candlebook-lc-present');
		const refusing = new ObjectStorage({ ...server.options, bucket: 'candlebook-lc-missing' });
		try {
			await expect(
				uploadLightCurves(orm.em.fork(), refusing, observer, input(text), lightCurveQueueOf(boss))
			).rejects.toThrow();
		} finally {
			refusing.destroy();
			await server.close();
			rmSync(directory, { recursive: true, force: true });
		}
		expect(await orm.em.fork().count(LightCurveUpload, {})).toBe(before);
		expect(await orm.em.fork().count(AnalysisJob, { kind: 'light_curves' })).toBe(jobsBefore);
	});

	test('uploads and their results are visible to the uploader only', async () => {
		const other = await createActor(orm, 'other-observer', ['reader']);
		const [upload] = await orm.em.fork().find(LightCurveUpload, { uploadedBy: observer.id }, { limit: 1 });
		await expect(findUpload(orm.em.fork(), other, upload.id)).rejects.toMatchObject({ status: 404 });
		expect(await orm.em.fork().count(LightCurveResult, { upload: upload.id })).toBeGreaterThan(0);
	});
});

describe('large analyse requests become jobs', () => {
	test('more than ten series answer with a queued job that a worker finishes, one result per series', async () => {
		const series = Array.from({ length: 12 }, (_, i) => ({
			id: `KCS-LC-B${i}`,
			band: 'Ic',
			time_reference: 'HJD',
			time_offset_days: 2450000,
			points: inventedPoints(INVENTED_STARS[i % 3], 'Ic', 60)
		}));
		const outcome = await requestAnalysis(
			orm.em.fork(),
			observer,
			AnalyseRequestSchema.parse({ series }),
			lightCurveQueueOf(boss)
		);
		expect(outcome.kind).toBe('queued');
		if (outcome.kind !== 'queued') return;
		const { job, seen } = await watchJob(outcome.job.id);
		expect({ state: job.state, error: job.error }).toEqual({ state: 'succeeded', error: null });
		expect(seen.at(-1)).toBe(100);
		const results = (job.result as { results: { id: string; period_days: number }[] }).results;
		expect(results.map((result) => result.id)).toEqual(series.map((entry) => entry.id));
		results.forEach((result, i) => expect(result.period_days).toBeCloseTo(INVENTED_STARS[i % 3].periodDays, 3));
	});
});
