import { brotliCompressSync, gzipSync } from 'node:zlib';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { strToU8, zipSync } from 'fflate';
import { openOrm } from './support/accounts';
import { numberCanary, sharedRoundings, textCanary } from './support/canary/canaries';
import { fetchAll, judge, leakReport, slowestRows } from './support/canary/crawl';
import { bodyAsText, closeCrawlAgent, decodeContent } from './support/canary/http';
import { crawledRows, crawlTargets, rowLabel, type OpenApiDocument } from './support/canary/routes';
import { seedCanaryWorld } from './support/canary/seed';
import { origin } from './support/review-setup';

/**
 * The canary crawl: data a caller may not see (an embargoed version and a proposal for the next one,
 * a group-private calibrator set, a member's fit and light-curve upload) carries unique strings and
 * numbers; every GET row of the access policy, with its parameters filled from that data, is then
 * requested by every kind of caller, and no canary may show in any header or decoded body of an answer
 * to a caller outside the group, while the member and the admin must see each of them somewhere.
 */
let orm: MikroORM;

test.beforeAll(async () => {
	orm = await openOrm();
});

test.afterAll(async () => {
	closeCrawlAgent();
	await orm?.close(true);
});

test('the canaries are found however the product prints or packs them', () => {
	const inside = new Set(['admin'] as const);
	const zeroPoint = numberCanary('zero point', -14.8304617, inside);
	// 3 and 4 decimals, full precision, hyphen or U+2212, in an equation with a space after the sign.
	for (const shown of ['-14.830', '\u221214.8305', 'M = \u2212 14.830 mag', '"zero_point":-14.8304617', '-14.83046'])
		expect(zeroPoint.find(shown), shown).not.toBeNull();
	for (const other of ['14.830', '-114.830', '-14.831', '-14.8', '2026-12-14.830'])
		expect(zeroPoint.find(other), other).toBeNull();
	expect(
		sharedRoundings([
			{ label: 'a', value: -14.8304 },
			{ label: 'b', value: -14.8296 }
		])
	).toEqual(['b and a both round to −14.830']);

	const title = textCanary('title', 'cnry-title-x1', inside);
	const archive = Buffer.from(
		zipSync({ 'a/readme.txt': strToU8('nothing'), 'b/v.json': strToU8('{"t":"CNRY-TITLE-X1"}') })
	);
	const steps: string[] = [];
	expect(title.find(bodyAsText(archive, steps).toLowerCase())).not.toBeNull();
	expect(steps).toEqual(['zip (2 entries)']);
	// Content-Encoding `gzip, br`: gzip was applied first, so it is undone last.
	const encoded = brotliCompressSync(gzipSync('{"t":"cnry-title-x1"}'));
	expect(title.find(encoded.toString('latin1'))).toBeNull();
	const decoding: string[] = [];
	expect(title.find(decodeContent(encoded, 'gzip, br', decoding).toString('utf8'))).not.toBeNull();
	expect(decoding).toEqual(['br', 'gzip']);
});

test('no canary reaches a caller outside the group on any GET route or page', async () => {
	// Far more than it needs on an idle machine (about a minute here), for a loaded one.
	test.setTimeout(360_000);
	const started = performance.now();
	const seeded = await seedCanaryWorld(orm);
	const seededAt = performance.now();
	const document = (await (await fetch(`${origin}/api/v1/openapi.json`)).json()) as OpenApiDocument;
	const numeric = seeded.canaries.filter((canary) => seeded.numbers.some((n) => n.label === canary.label));
	expect(sharedRoundings(seeded.numbers)).toEqual([]);

	// Before any canary is proposed, nothing an admin can read may contain one of its numbers: otherwise a
	// "leak" could be an unrelated number that happens to round the same.
	const admin = seeded.callers.find((caller) => caller.name === 'admin')!;
	const baseline = await fetchAll(origin, crawlTargets(seeded.baseline, document), [admin]);
	const collisions = baseline.flatMap(({ target, response }) =>
		numeric.flatMap((canary) => {
			const text = `${response.headerText}\n${response.bodyText}`.toLowerCase();
			const needle = canary.find(text);
			return needle ? [`${canary.label}: "${needle}" already in GET ${target.path}`] : [];
		})
	);
	expect(collisions, 'canary numbers must not occur in data that is not a canary').toEqual([]);

	const baselineAt = performance.now();
	await seeded.plant();
	const targets = crawlTargets(seeded.world, document);
	const fetched = await fetchAll(origin, targets, seeded.callers);
	const rows = crawledRows()
		.filter((rule) => rule.method === 'GET')
		.map(rowLabel);
	const result = judge(fetched, seeded.canaries, rows);
	const elapsed = performance.now() - started;
	const seconds = (from: number, to: number) => `${((to - from) / 1000).toFixed(1)} s`;
	console.log(
		`canary crawl timing: seeding ${seconds(started, seededAt)}, baseline ${seconds(seededAt, baselineAt)}, ` +
			`planting and crawl ${seconds(baselineAt, started + elapsed)}`
	);

	const requests = result.requests + baseline.length + 1;
	console.log(
		`canary crawl: ${requests} requests (${targets.length} URLs × ${seeded.callers.length} callers, ` +
			`${baseline.length} baseline), ${result.checksPassed} canary checks passed, ${result.leaks.length} leaks, ` +
			`${result.echoes} skipped as echoes of the URL, ${Math.round(elapsed)} ms`
	);
	console.log(`canary crawl, slowest rows: ${slowestRows(fetched)}`);
	// A budget rather than an assertion: on a machine shared with other work, time says little about the crawl.
	if (elapsed > 120_000) console.warn(`canary crawl: over its 2-minute budget (${Math.round(elapsed / 1000)} s)`);
	if (result.leaks.length) console.log(`canary leaks:\n${leakReport(result.leaks)}`);

	expect(result.unpackedArchive, 'the export archive was unpacked and searched').toBe(true);
	expect(result.unreachedRows, 'GET rows no crawled URL of which answered the admin with 2xx').toEqual([]);
	expect(result.serverErrors, 'server errors during the crawl').toEqual([]);
	expect(result.unseen, 'canaries the member or the admin should see somewhere').toEqual([]);
	expect(result.leaks.length, `canaries shown to callers who may not see them:\n${leakReport(result.leaks)}`).toBe(0);
});
