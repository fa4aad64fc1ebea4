import type { MikroORM } from '@mikro-orm/postgresql';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { verifyDigest } from '../../src/lib/calibration/index';
import {
	AnalysisJob,
	CalibratorRevision,
	CalibratorValueSource,
	LightCurveResult
} from '../../src/lib/server/entities/index';
import { lightCurveQueueOf, startJobQueue, startLightCurveWorker } from '../../src/lib/server/jobs/queue';
import type { LightCurveQueue } from '../../src/lib/server/light-curves/jobs';
import { uploadLightCurves } from '../../src/lib/server/light-curves/uploads';
import type { Actor } from '../../src/lib/server/registry/actor';
import {
	createCalibratorSet,
	revisionContent,
	storeRevision,
	type UploadInput
} from '../../src/lib/server/registry/calibrator-sets';
import { sinusoidIntensityMean } from '../support/bessel';
import { openTestOrm } from '../support/database';
import { INVENTED_STARS, inventedUploadCsv } from '../support/light-curves';
import { createActor, createGroup, startTestObjectStore, unique, type TestObjectStore } from '../support/registry';

/**
 * A calibrator revision that takes its periods and mean magnitudes from light-curve analyses: the values
 * are the analyses' own, the revision says which analysis gave each, and nothing it relies on can change.
 * Stars and survey are invented.
 */
let orm: MikroORM;
let boss: PgBoss;
let store: TestObjectStore;
let curator: Actor;
let otherCurator: Actor;
let groupSlug: string;
let uploadId: string;
let pendingUploadId: string;

// A pure sinusoid: its intensity mean has a closed form to check the stored magnitude against.
const SINUSOID = { star: 'KCS-LC-SINE', periodDays: 4.4, m0: 15.5, semiAmplitude: 0.4 };

function sinusoidCsv(): string {
	const lines: string[] = [];
	for (let i = 0; i < 150; i++) {
		const t = 5000 + 300 * ((i * 0.754877666) % 1);
		const mag = SINUSOID.m0 + SINUSOID.semiAmplitude * Math.sin((2 * Math.PI * t) / SINUSOID.periodDays);
		lines.push(`${SINUSOID.star},V,${t.toFixed(6)},${mag.toFixed(6)},0.005`);
	}
	return lines.join('\n') + '\n';
}

async function finish(jobId: string) {
	for (let i = 0; i < 1200; i++) {
		const job = await orm.em.fork().findOneOrFail(AnalysisJob, jobId);
		if (job.state === 'succeeded' || job.state === 'failed') return job;
		await new Promise((resolve) => setTimeout(resolve, 50));
	}
	throw new Error(`job ${jobId} did not finish`);
}

const lightCurveInput = (text: string) => ({
	bytes: new TextEncoder().encode(text),
	mediaType: 'text/csv',
	fileName: 'kestrel-light-curves.csv',
	timeReference: 'MJD',
	timeOffsetDays: '50000',
	mapping: {},
	star: null,
	band: null,
	population: 'classical_fundamental' as const
});

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	boss = await startJobQueue(process.env.DATABASE_URL!);
	const group = await createGroup(orm, 'light-curve-revisions');
	groupSlug = group.slug;
	const membership = [{ groupId: group.id, standing: 'member' as const }];
	curator = await createActor(orm, 'lc-curator', ['reader', 'curator'], membership);
	otherCurator = await createActor(orm, 'lc-other', ['reader', 'curator'], membership);

	// Queued on a queue no worker reads, so its analysis stays "queued" for the whole test.
	const unread: LightCurveQueue = { enqueueLightCurves: async () => null };
	const pending = await uploadLightCurves(
		orm.em.fork(),
		store.storage,
		curator,
		lightCurveInput(inventedUploadCsv(INVENTED_STARS.slice(0, 1), 60)),
		unread
	);
	pendingUploadId = pending.id;

	const upload = await uploadLightCurves(
		orm.em.fork(),
		store.storage,
		curator,
		lightCurveInput(inventedUploadCsv() + sinusoidCsv()),
		lightCurveQueueOf(boss)
	);
	uploadId = upload.id;
	await startLightCurveWorker(boss, orm, () => store.storage, 0.5);
	expect((await finish(upload.analysisJob!.id)).state).toBe('succeeded');
}, 120_000);

afterAll(async () => {
	await boss.stop({ graceful: false, wait: true });
	await store.close();
	await orm.close(true);
});

async function newSet() {
	const slug = unique('lc-set');
	await createCalibratorSet(orm.em.fork(), curator, {
		slug,
		title: 'Invented Kestrel calibrators',
		description: '',
		group: groupSlug,
		licence: 'CC-BY-4.0',
		citations: []
	});
	return slug;
}

// Periods left empty for the analysed stars; KCS-LC-003 keeps the table's own period and magnitude.
const TABLE = [
	'star,population,period_days,mag_V,parallax_mas,parallax_err_mas',
	'KCS-LC-001,classical_fundamental,,,0.31,0.02',
	'KCS-LC-002,classical_fundamental,,,0.27,0.02',
	'KCS-LC-003,classical_fundamental,7.69,14.90,0.22,0.02',
	'KCS-LC-SINE,classical_fundamental,,,0.35,0.03',
	'KCS-UNOBSERVED,classical_fundamental,9.1,14.2,0.2,0.02'
].join('\n');

function revisionInput(extra: Partial<UploadInput> = {}): UploadInput {
	return {
		bytes: new TextEncoder().encode(TABLE),
		mediaType: 'text/csv',
		fileName: 'kestrel-calibrators.csv',
		mapping: {},
		note: 'periods and means from light curves',
		lightCurves: { upload: uploadId, fill: 'blank' },
		...extra
	};
}

const results = () => orm.em.fork().find(LightCurveResult, { upload: uploadId }, { orderBy: { position: 'asc' } });

describe('calibrator revisions from light-curve analyses', () => {
	test('empty periods and magnitudes are filled from the analyses, each with its source, and the digest covers them', async () => {
		const slug = await newSet();
		const stored = await storeRevision(orm.em.fork(), store.storage, curator, slug, revisionInput());
		const content = revisionContent(stored.revision);
		expect(verifyDigest(content as unknown as Record<string, unknown>).ok).toBe(true);

		const analyses = await results();
		const row = (star: string) => content.rows.find((candidate) => candidate.star === star)!.values;
		for (const star of ['KCS-LC-001', 'KCS-LC-002']) {
			const mine = analyses.filter((result) => result.star === star);
			const precise = [...mine].sort((a, b) => Number(a.periodErrDays) - Number(b.periodErrDays))[0];
			// The stored values are the analyses' own numbers, exactly.
			expect(row(star).period_days).toBe(precise.periodDays);
			expect(row(star).period_err_days).toBe(precise.periodErrDays);
			expect(row(star).mag_V).toBe(mine.find((result) => result.band === 'V')!.meanMagIntensity);
			expect(row(star).mag_Ic).toBe(mine.find((result) => result.band === 'Ic')!.meanMagIntensity);
			// And the analyses found the periods the invented curves were made with.
			const truth = INVENTED_STARS.find((invented) => invented.star === star)!.periodDays;
			expect(Math.abs(Number(row(star).period_days) - truth)).toBeLessThan(5 * Number(row(star).period_err_days));
		}
		// The table's own values stay in "blank" mode; the Ic analysis still fills its empty Ic cell.
		expect(row('KCS-LC-003')).toMatchObject({ period_days: 7.69, mag_V: 14.9 });
		expect(typeof row('KCS-LC-003').mag_Ic).toBe('number');
		expect(row('KCS-UNOBSERVED')).toMatchObject({ period_days: 9.1, mag_V: 14.2, mag_Ic: null });
		// Closed form of a sinusoid's intensity mean (tests/support/bessel.ts); the noise-free curve is
		// fitted exactly, so only rounding of the file's six decimals remains (hence 1e-5 mag).
		expect(Number(row('KCS-LC-SINE').mag_V)).toBeCloseTo(sinusoidIntensityMean(SINUSOID.m0, SINUSOID.semiAmplitude), 5);

		const sources = content.value_sources!;
		expect(sources.every((source) => source.light_curve.upload === uploadId)).toBe(true);
		expect(new Set(sources.map((source) => source.light_curve.source_digest)).size).toBe(1);
		for (const source of sources) {
			const analysis = analyses.find((result) => result.id === source.light_curve.result)!;
			expect(analysis.star).toBe(source.star);
			expect(analysis.band).toBe(source.light_curve.band);
		}
		expect(sources.filter((source) => source.star === 'KCS-LC-003').map((source) => source.field)).toEqual([
			'mag_Ic',
			'mag_err_Ic'
		]);
		expect(stored.lightCurveNotices).toEqual([]);

		const recorded = await orm.em.fork().find(CalibratorValueSource, { revision: stored.revision.id });
		expect(recorded).toHaveLength(sources.length);
		expect(new Set(recorded.map((entry) => `${entry.star}/${entry.field}=${entry.value}`))).toEqual(
			new Set(sources.map((source) => `${source.star}/${source.field}=${source.value}`))
		);
	});

	test('"all" replaces the table’s values and says what each replaced', async () => {
		const slug = await newSet();
		const stored = await storeRevision(
			orm.em.fork(),
			store.storage,
			curator,
			slug,
			revisionInput({ lightCurves: { upload: uploadId, fill: 'all' } })
		);
		const sources = revisionContent(stored.revision).value_sources!;
		const period = sources.find((source) => source.star === 'KCS-LC-003' && source.field === 'period_days')!;
		expect(period.replaced).toBe(7.69);
		expect(Math.abs(period.value - 7.7)).toBeLessThan(0.01);
	});

	test('nothing it relies on can change: value sources and analyses refuse UPDATE and DELETE, even in SQL', async () => {
		const slug = await newSet();
		const { revision } = await storeRevision(orm.em.fork(), store.storage, curator, slug, revisionInput());
		const connection = orm.em.getConnection();
		const [source] = await orm.em.fork().find(CalibratorValueSource, { revision: revision.id }, { limit: 1 });
		await expect(
			connection.execute(`update app_calibrator_value_source set value = 1 where id = ?`, [source.id])
		).rejects.toThrow(/frozen: UPDATE is not allowed/);
		await expect(
			connection.execute(`delete from app_calibrator_value_source where id = ?`, [source.id])
		).rejects.toThrow(/frozen: DELETE is not allowed/);
		const resultId = source.lightCurveResult.id;
		await expect(
			connection.execute(`update app_light_curve_result set period_days = 1 where id = ?`, [resultId])
		).rejects.toThrow(/frozen: UPDATE is not allowed/);
		await expect(connection.execute(`delete from app_light_curve_upload where id = ?`, [uploadId])).rejects.toThrow(
			/violates foreign key constraint/
		);
	});

	test('a row left without a period is refused by line and column, and nothing is stored', async () => {
		const slug = await newSet();
		const table = TABLE + '\nKCS-NO-CURVE,classical_fundamental,,15.0,0.2,0.02';
		const before = await orm.em.fork().count(CalibratorRevision, {});
		await expect(
			storeRevision(
				orm.em.fork(),
				store.storage,
				curator,
				slug,
				revisionInput({ bytes: new TextEncoder().encode(table) })
			)
		).rejects.toMatchObject({
			status: 422,
			extra: {
				issues: [
					{
						line: 7,
						column: 'period_days',
						value: '',
						reason: 'is empty, and no light-curve analysis of KCS-NO-CURVE fills it'
					}
				]
			}
		});
		expect(await orm.em.fork().count(CalibratorRevision, {})).toBe(before);
	});

	test('another curator cannot use the upload (404), and an unfinished one is refused (409)', async () => {
		const slug = await newSet();
		await expect(
			storeRevision(orm.em.fork(), store.storage, otherCurator, slug, revisionInput())
		).rejects.toMatchObject({ status: 404 });
		await expect(
			storeRevision(
				orm.em.fork(),
				store.storage,
				curator,
				slug,
				revisionInput({ lightCurves: { upload: pendingUploadId, fill: 'blank' } })
			)
		).rejects.toMatchObject({ status: 409, code: 'light-curves-not-ready' });
	});
});
