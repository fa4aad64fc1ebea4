import { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import config from '../../mikro-orm.config';
import {
	inEngineOneShape,
	sealRelationVersion,
	verifyDigest,
	type RelationVersionContent
} from '../../src/lib/calibration/index';
import { reproduceContent, reproduceVersion } from '../../src/lib/server/registry/reproduce';
import { CalibratorRevision, CalibratorSet, CalibratorValueSource, User } from '../../src/lib/server/entities/index';
import { Relation } from '../../src/lib/server/entities/relation.entity';
import { RelationVersion } from '../../src/lib/server/entities/relation-version.entity';
import { VersionLifecycle } from '../../src/lib/server/entities/version-lifecycle.entity';
import { migrateDatabase, seedDemo } from '../../src/lib/server/ops/migrate';
import { revisionContent, revisionRows } from '../../src/lib/server/registry/calibrator-sets';
import { DEMO_LIGHT_CURVE_SET, inventedCurveStars } from '../../src/lib/server/registry/demo-light-curves';
import { DEMO_MARKER_SET } from '../../src/lib/server/registry/demo-registry';

/**
 * `npm start` migrates and seeds the invented demo: here exactly that, on a database of its own in the
 * test cluster (so the demo never mixes with other tests' data), and a second start that adds nothing.
 */
const url = process.env.CANDLEBOOK_DEMO_DATABASE_URL;
const ownerUrl = process.env.CANDLEBOOK_DEMO_DATABASE_OWNER_URL;
let orm: MikroORM;

async function counts() {
	const em = orm.em.fork();
	return {
		users: await em.count(User, {}),
		sets: await em.count(CalibratorSet, {}),
		revisions: await em.count(CalibratorRevision, {}),
		relations: await em.count(Relation, {}),
		versions: await em.count(RelationVersion, {})
	};
}

beforeAll(async () => {
	if (!url || !ownerUrl) {
		throw new Error('CANDLEBOOK_DEMO_DATABASE_URL/_OWNER_URL are not set: run integration tests through `npm test`');
	}
	await migrateDatabase({ ownerUrl, runtimeUrl: url });
	await seedDemo(url);
	orm = await MikroORM.init({ ...config, clientUrl: url, debug: false });
}, 300_000);

afterAll(async () => {
	await orm?.close(true);
});

describe('the invented demo', () => {
	test('has its calibrator sets, relations with versions in every standing, and says it is invented', async () => {
		const em = orm.em.fork();
		const sets = await em.find(CalibratorSet, {}, { orderBy: { slug: 'asc' } });
		expect(sets.map((set) => set.slug)).toEqual(
			[DEMO_MARKER_SET, DEMO_LIGHT_CURVE_SET, 'kestrel-milky-way-parallaxes'].sort()
		);
		expect(sets.every((set) => set.title.includes('(invented)'))).toBe(true);
		const relations = await em.find(Relation, {});
		expect(relations.length).toBeGreaterThanOrEqual(5);
		expect(relations.every((relation) => relation.title.includes('(invented)'))).toBe(true);
		const lifecycles = await em.find(VersionLifecycle, {});
		expect(lifecycles.some((lifecycle) => lifecycle.deprecatedAt !== null)).toBe(true);
		expect(lifecycles.some((lifecycle) => lifecycle.embargoUntil !== null)).toBe(true);
	});

	test('its weighted relation is frozen with the χ²/dof warning and the Lantern Cloud distance as a systematic', async () => {
		const started = performance.now();
		const em = orm.em.fork();
		const version = await em.findOneOrFail(RelationVersion, {
			relation: { slug: 'kestrel-lantern-weighted-w-vi' },
			number: 1
		});
		const content = version.content as unknown as RelationVersionContent;
		expect(content.fit.method).toBe('wls');
		expect(content.fit_quality).toMatchObject({ covariance_scaled: true, errors_too_small: true });
		expect(content.systematics?.terms).toEqual([
			expect.objectContaining({ id: 'anchor_distance', value: 18.48, error: 0.03 })
		]);
		// M = m − μ: +1σ of the shared distance moves a by −0.03 mag (common practice).
		expect(content.systematics!.terms[0].effect.zero_point).toBeCloseTo(-0.03, 10);
		const reproduction = await reproduceVersion(em, null, 'kestrel-lantern-weighted-w-vi', 1);
		expect(reproduction.digestMatches).toBe(true);

		// kestrel-lantern-w-vi@1 (ordinary least squares) as engine 1.0.0 froze it in a demo seeded before
		// engine 2: the same content without the keys engine 2 added. It still reproduces its own digest.
		// (Its later versions fit σ_int, which engine 2 estimates by REML where engine 1 used ML.)
		const existing = await em.findOneOrFail(RelationVersion, { relation: { slug: 'kestrel-lantern-w-vi' }, number: 1 });
		const { digest: _d, ...rest } = existing.content as unknown as RelationVersionContent & { digest: string };
		const engineOne = sealRelationVersion(inEngineOneShape(rest));
		const revision = await em.findOneOrFail(CalibratorRevision, {
			calibratorSet: { slug: engineOne.calibrator_set.slug },
			number: engineOne.calibrator_set.revision
		});
		const old = reproduceContent(engineOne, revisionRows(revision));
		expect(old.differences).toEqual([]);
		expect(old.recomputedDigest).toBe(engineOne.digest);
		console.log(`demo error budget: ${(performance.now() - started).toFixed(0)} ms`);
	});

	test('its light-curve set takes every period and mean from the invented curves, near the periods they were made with', async () => {
		const em = orm.em.fork();
		const set = await em.findOneOrFail(CalibratorSet, { slug: DEMO_LIGHT_CURVE_SET });
		const revision = await em.findOneOrFail(CalibratorRevision, { calibratorSet: set.id, number: 1 });
		const content = revisionContent(revision);
		expect(verifyDigest(content as unknown as Record<string, unknown>).ok).toBe(true);
		const stars = inventedCurveStars();
		// Every star: period, its error, and V and Ic means with their errors.
		expect(content.value_sources).toHaveLength(stars.length * 6);
		expect(await em.count(CalibratorValueSource, { revision: revision.id })).toBe(stars.length * 6);
		for (const { star, periodDays } of stars) {
			const values = content.rows.find((row) => row.star === star)!.values;
			const found = Number(values.period_days);
			// The truth is the period each invented curve was generated with; the noise makes 5σ generous.
			expect(Math.abs(found - periodDays), star).toBeLessThan(5 * Number(values.period_err_days));
			expect(Number(values.mag_V)).toBeGreaterThan(Number(values.mag_Ic));
		}
	});

	test('a second start adds nothing', async () => {
		const before = await counts();
		await seedDemo(url!);
		expect(await counts()).toEqual(before);
	});
});
