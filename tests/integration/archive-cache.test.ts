import type { MikroORM } from '@mikro-orm/postgresql';
import { unzipSync } from 'fflate';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { archiveKey, archiveListing, archiveStream } from '../../src/lib/server/registry/archive';
import { ArchiveCache } from '../../src/lib/server/registry/archive-cache';
import { createCalibratorSet, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

/**
 * The deposit archive is built once per content address: the key is SHA-256 of the listing of what
 * the caller's archive holds (versions' and revisions' digests, the sets' titles, licences and
 * citations), so a change anywhere gives a new key, and content the caller may not see never enters
 * the listing, the key or the bytes.
 */
let orm: MikroORM;
let store: TestObjectStore;
let curator: Awaited<ReturnType<typeof createActor>>;
let publicSet: string;
let privateSet: string;
const em = () => orm.em.fork();
const started = performance.now();

async function upload(set: string, seed: number) {
	await uploadRevision(em(), store.storage, curator, set, {
		bytes: new TextEncoder().encode(hostCalibratorCsv({ seed })),
		mediaType: 'text/csv',
		fileName: `host-${seed}.csv`,
		mapping: {},
		note: ''
	});
}

async function current() {
	const listing = await archiveListing(em());
	return { listing, key: archiveKey(listing) };
}

const files = (bytes: Uint8Array) => unzipSync(bytes);

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'archive-cache');
	curator = await createActor(
		orm,
		'archive-curator',
		['reader', 'curator'],
		[{ groupId: group.id, standing: 'member' }]
	);
	publicSet = unique('archive-public');
	privateSet = unique('archive-private');
	for (const [slug, visibility] of [
		[publicSet, 'public'],
		[privateSet, 'group']
	] as const) {
		await createCalibratorSet(em(), curator, {
			slug,
			title: `Invented ${visibility} calibrators`,
			description: '',
			group: group.slug,
			licence: 'CC0-1.0',
			citations: ['Invented Survey Team (2026)'],
			visibility
		});
	}
	await upload(publicSet, 3);
});

afterAll(async () => {
	await store.close();
	await orm.close(true);
	console.log(`archive cache: ${(performance.now() - started).toFixed(0)} ms`);
});

describe('the deposit archive cache', () => {
	test('a second request is served from the cache, byte for byte what a fresh build gives', async () => {
		const cache = new ArchiveCache();
		const { listing, key } = await current();
		const t0 = performance.now();
		const first = await cache.bytes(key, () => archiveStream(em(), listing));
		const t1 = performance.now();
		const again = await current();
		expect(again.key).toBe(key);
		const second = await cache.bytes(again.key, () => archiveStream(em(), again.listing));
		const t2 = performance.now();
		console.log(
			`archive of ${listing.versions.length} versions and ${listing.revisions.length} revisions (${first.byteLength} bytes): ` +
				`built in ${(t1 - t0).toFixed(0)} ms, served from the cache in ${(t2 - t1).toFixed(1)} ms (listing and key included)`
		);
		expect(cache.builds).toBe(1);
		expect(cache.reuses).toBe(1);
		expect(second).toBe(first);
		const fresh = new Uint8Array(await new Response(archiveStream(em(), listing)).arrayBuffer());
		expect(Buffer.from(fresh).equals(Buffer.from(first))).toBe(true);
		expect(Object.keys(files(first))).toContain(`calibrator-sets/${publicSet}/revisions/1.csv`);
	});

	test('requests that arrive while the archive is being built share that one build', async () => {
		const cache = new ArchiveCache();
		const { listing, key } = await current();
		const answers = await Promise.all(
			Array.from({ length: 4 }, () => cache.bytes(key, () => archiveStream(em(), listing)))
		);
		expect(cache.builds).toBe(1);
		expect(new Set(answers).size).toBe(1);
	});

	test('a revision of a group-private set changes neither the key nor the archive', async () => {
		const before = await current();
		await upload(privateSet, 4);
		const after = await current();
		expect(after.key).toBe(before.key);
		expect(after.listing.revisions.some((revision) => revision.set === privateSet)).toBe(false);
		const bytes = await new ArchiveCache().bytes(after.key, () => archiveStream(em(), after.listing));
		expect(Object.keys(files(bytes)).filter((path) => path.includes(privateSet))).toEqual([]);
	});

	test('a new public revision, a changed set title, or a set made public each give a new key and archive', async () => {
		const cache = new ArchiveCache();
		const first = await current();
		await cache.bytes(first.key, () => archiveStream(em(), first.listing));

		await upload(publicSet, 5);
		const withRevision = await current();
		expect(withRevision.key).not.toBe(first.key);
		const rebuilt = files(await cache.bytes(withRevision.key, () => archiveStream(em(), withRevision.listing)));
		expect(Object.keys(rebuilt)).toContain(`calibrator-sets/${publicSet}/revisions/2.vot`);

		const title = `Invented calibrators, renamed ${unique('t')}`;
		await orm.em.getConnection().execute(`update app_calibrator_set set title = ? where slug = ?`, [title, publicSet]);
		const renamed = await current();
		expect(renamed.key).not.toBe(withRevision.key);
		const retitled = files(await cache.bytes(renamed.key, () => archiveStream(em(), renamed.listing)));
		expect(new TextDecoder().decode(retitled[`calibrator-sets/${publicSet}/revisions/1.json`])).toContain(title);

		await orm.em
			.getConnection()
			.execute(`update app_calibrator_set set visibility = 'public' where slug = ?`, [privateSet]);
		const widened = await current();
		expect(widened.key).not.toBe(renamed.key);
		expect(widened.listing.revisions.filter((revision) => revision.set === privateSet)).toHaveLength(1);
		expect(cache.builds).toBe(3);
	});

	test('the key is the SHA-256 of the listing: one item more or less, or another scope, changes it', async () => {
		const { listing, key } = await current();
		expect(key).toMatch(/^[0-9a-f]{64}$/);
		expect(archiveKey({ ...listing, revisions: listing.revisions.slice(1) })).not.toBe(key);
		expect(archiveKey({ ...listing, scope: 'group:another' as 'public' })).not.toBe(key);
		expect(archiveKey(structuredClone(listing))).toBe(key);
	});
});
