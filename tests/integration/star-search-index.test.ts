import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createCalibratorSet } from '../../src/lib/server/registry/calibrator-sets';
import { findStar } from '../../src/lib/server/registry/star-search';
import { openTestOrm } from '../support/database';
import { createActor, createGroup, unique } from '../support/registry';

/**
 * The star search on real PostgreSQL with a few thousand revisions: it reads revisions through the
 * GIN index on app_calibrator_star_keys (EXPLAIN names the index), is measured against the unindexed
 * form of the same query, and still finds a star by name or cross id, ignoring case.
 */
const REVISIONS = 3000;
const ROWS_PER_REVISION = 20;
let orm: MikroORM;
let member: Awaited<ReturnType<typeof createActor>>;
let setSlug: string;
const tag = unique('idx').replace('-', '');
const started = performance.now();

beforeAll(async () => {
	orm = await openTestOrm();
	const group = await createGroup(orm, 'star-index');
	member = await createActor(
		orm,
		'star-index member',
		['reader', 'curator'],
		[{ groupId: group.id, standing: 'member' }]
	);
	setSlug = unique('star-index');
	// Group-private, so these thousands of revisions stay out of every public listing other tests read.
	await createCalibratorSet(orm.em.fork(), member, {
		slug: setSlug,
		title: 'Invented revisions for the star-search index',
		description: '',
		group: group.slug,
		licence: 'CC0-1.0',
		citations: [],
		visibility: 'group'
	});
	const t0 = performance.now();
	// Revision n holds stars "<tag> n-0" … "<tag> n-19" with cross ids 100000·n + i (invented); in
	// revisions 1–300 the first star is "<tag> shared" instead, to page through.
	await orm.em.getConnection().execute(
		`insert into app_calibrator_revision (id, calibrator_set_id, number, digest, source_sha256, source_key,
			source_name, source_media_type, source_bytes, row_count, content, note, uploaded_by_id, created_at)
		select gen_random_uuid(), s.id, n, 'sha256:' || repeat('0', 64), repeat('0', 64), 'test/none', 'bulk.csv',
			'text/csv', 0, cast(? as int), jsonb_build_object('calibrator_set', s.slug, 'revision', n, 'rows',
				(select jsonb_agg(jsonb_build_object('star', name, 'values',
					jsonb_build_object('star', name, 'cross_id', 100000 * n + i,
						'period_days', 5 + i)))
				 from generate_series(0, cast(? as int) - 1) i,
					lateral (select case when i = 0 and n <= 300 then cast(? as text) || ' shared' else cast(? as text) || ' ' || n || '-' || i end as name) named)),
			'', cast(? as uuid), now()
		from app_calibrator_set s, generate_series(1, cast(? as int)) n where s.slug = ?`,
		[ROWS_PER_REVISION, ROWS_PER_REVISION, tag, tag, member.id, REVISIONS, setSlug]
	);
	await orm.em.getConnection().execute('analyze app_calibrator_revision');
	console.log(`seeded ${REVISIONS} revisions × ${ROWS_PER_REVISION} rows in ${(performance.now() - t0).toFixed(0)} ms`);
}, 120_000);

afterAll(async () => {
	await orm.close(true);
	console.log(`star-search index: ${(performance.now() - started).toFixed(0)} ms`);
});

/** The hit query as it reads, with and without the index predicate (viewer as a member). */
function hitQuery(indexed: boolean) {
	return `select s.slug, cr.number, item->>'star' as star
		from app_calibrator_revision cr
		join app_calibrator_set s on s.id = cr.calibrator_set_id
		cross join lateral jsonb_array_elements(cr.content->'rows') as item
		where ${indexed ? `app_calibrator_star_keys(cr.content) @> array[lower(cast($1 as text))] and` : ''}
			(lower(item->>'star') = lower($1) or lower(item->'values'->>'cross_id') = lower($1))
		order by s.slug, cr.number, item->>'star' limit 51`;
}

async function explain(indexed: boolean, q: string) {
	const knex = orm.em.getConnection().getKnex();
	const sql = hitQuery(indexed).replaceAll('$1', '?');
	const result = await knex.raw(`explain (analyze, format json) ${sql}`, [q, q, q].slice(0, indexed ? 3 : 2));
	const [
		{
			'QUERY PLAN': [plan]
		}
	] = result.rows as { 'QUERY PLAN': { Plan: unknown; 'Execution Time': number }[] }[];
	return { text: JSON.stringify(plan.Plan), ms: plan['Execution Time'] };
}

describe('star search over a few thousand revisions', () => {
	test('reads revisions through the GIN index, and is faster than unpacking every revision', async () => {
		const q = `${tag} 2345-7`.toUpperCase();
		const before = await explain(false, q);
		const after = await explain(true, q);
		console.log(
			`star search hit query over ${REVISIONS} revisions (${REVISIONS * ROWS_PER_REVISION} rows): ` +
				`unindexed ${before.ms.toFixed(1)} ms (EXPLAIN: ${before.text.includes('Seq Scan') ? 'Seq Scan' : 'other'}), ` +
				`indexed ${after.ms.toFixed(2)} ms (EXPLAIN: ${after.text.includes('app_calibrator_revision_star_keys_index') ? 'Bitmap Index Scan on app_calibrator_revision_star_keys_index' : 'no index'})`
		);
		expect(before.text).not.toContain('app_calibrator_revision_star_keys_index');
		expect(after.text).toContain('app_calibrator_revision_star_keys_index');
		expect(after.ms).toBeLessThan(before.ms);
	});

	test('finds a star by name (any case) and by cross id in exactly its revision, through findStar', async () => {
		const t0 = performance.now();
		const byName = await findStar(orm.em.fork(), member, { q: `${tag} 2345-7`.toUpperCase(), limit: 50, after: null });
		const t1 = performance.now();
		console.log(`findStar by name over ${REVISIONS} revisions: ${(t1 - t0).toFixed(1)} ms`);
		expect(byName.items.map((item) => [item.calibratorSet, item.revision, item.star])).toEqual([
			[setSlug, 2345, `${tag} 2345-7`]
		]);
		const byCrossId = await findStar(orm.em.fork(), member, { q: String(100000 * 17 + 3), limit: 50, after: null });
		expect(byCrossId.items.filter((item) => item.calibratorSet === setSlug).map((item) => item.revision)).toEqual([17]);
		expect(byCrossId.items.find((item) => item.calibratorSet === setSlug)?.crossId).toBe('1700003');
	});

	test('a page holds at most `limit` (≤ 200) appearances and hands on a cursor for the rest', async () => {
		const first = await findStar(orm.em.fork(), member, { q: `${tag} SHARED`, limit: 200, after: null });
		expect(first.items).toHaveLength(200);
		expect(first.nextAfter).toEqual([setSlug, 200]);
		const rest = await findStar(orm.em.fork(), member, { q: `${tag} shared`, limit: 200, after: first.nextAfter });
		expect(rest.items.map((item) => item.revision)).toEqual(Array.from({ length: 100 }, (_, i) => 201 + i));
		expect(rest.nextAfter).toBeNull();
	});

	test('the private revisions stay out of an anonymous search', async () => {
		const anonymous = await findStar(orm.em.fork(), null, { q: `${tag} 2345-7`, limit: 50, after: null });
		expect(anonymous.items).toEqual([]);
	});
});
