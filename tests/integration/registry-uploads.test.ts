import { createHash } from 'node:crypto';
import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { calibratorRevisionDigest, type CalibratorRevisionContent } from '../../src/lib/calibration/index';
import { AuditEvent, CalibratorRevision } from '../../src/lib/server/entities/index';
import type { Actor } from '../../src/lib/server/registry/actor';
import {
	createCalibratorSet,
	diffRevisions,
	revisionCsv,
	SOURCE_PREFIX,
	uploadRevision,
	type UploadInput
} from '../../src/lib/server/registry/calibrator-sets';
import { RegistryError } from '../../src/lib/server/registry/errors';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

let orm: MikroORM;
let store: TestObjectStore;
let curator: Actor;
let outsider: Actor;
let groupSlug: string;

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'uploads');
	groupSlug = group.slug;
	curator = await createActor(orm, 'curator', ['reader', 'curator'], [{ groupId: group.id, standing: 'member' }]);
	outsider = await createActor(orm, 'outsider', ['reader', 'curator']);
});

afterAll(async () => {
	await store.close();
	await orm.close(true);
});

const encode = (text: string) => new TextEncoder().encode(text);
const sha = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

async function newSet() {
	const slug = unique('set');
	await createCalibratorSet(orm.em.fork(), curator, {
		slug,
		title: 'Invented set',
		description: '',
		group: groupSlug,
		licence: 'CC-BY-4.0',
		citations: ['Invented et al. 2026']
	});
	return slug;
}

function upload(slug: string, bytes: Uint8Array, extra: Partial<UploadInput> = {}, actor = curator) {
	return uploadRevision(orm.em.fork(), store.storage, actor, slug, {
		bytes,
		mediaType: 'text/csv',
		fileName: 'calibrators.csv',
		mapping: {},
		note: '',
		...extra
	});
}

/** Uploads that must be refused, each with the line, column and reason it must name. */
const CANONICAL_HEAD = 'star,population,period_days,mag_V,mag_err_V,parallax_mas,parallax_err_mas';
const BAD_UPLOADS: { name: string; body: () => Uint8Array; mediaType?: string; status: number; expect: RegExp }[] = [
	{
		name: 'wrong delimiter (semicolons sent as text/csv)',
		body: () => encode('star;population;period_days\nA;classical_fundamental;5\n'),
		status: 422,
		expect: /^line\/1: the file is sent as text\/csv but its columns are separated by ";"/
	},
	{
		name: 'a missing required column',
		body: () => encode('star,period_days\nA,5\n'),
		status: 422,
		expect: /^line\/1: no column fills the required field "population"/
	},
	{
		name: 'text in a numeric field',
		body: () => encode(`${CANONICAL_HEAD}\nA,classical_fundamental,5,bright,0.01,1.2,0.05\n`),
		status: 422,
		expect: /^line\/2\/mag_V: "bright": is not a number/
	},
	{
		name: 'NaN spelled out in a required numeric field',
		body: () => encode(`${CANONICAL_HEAD}\nA,classical_fundamental,NaN,5,0.01,1.2,0.05\n`),
		status: 422,
		expect: /^line\/2\/period_days: "NaN": is missing/
	},
	{
		name: 'a negative period',
		body: () => encode(`${CANONICAL_HEAD}\nA,classical_fundamental,-5,5,0.01,1.2,0.05\n`),
		status: 422,
		expect: /^line\/2\/period_days: "-5": must be positive/
	},
	{
		name: 'a non-positive parallax error',
		body: () => encode(`${CANONICAL_HEAD}\nA,classical_fundamental,5,5,0.01,1.2,0\n`),
		status: 422,
		expect: /^line\/2\/parallax_err_mas: "0": must be positive/
	},
	{
		name: 'a non-positive parallax',
		body: () => encode(`${CANONICAL_HEAD}\nA,classical_fundamental,5,5,0.01,-0.2,0.05\n`),
		status: 422,
		expect: /^line\/2\/parallax_mas: "-0.2": must be positive/
	},
	{
		name: 'a duplicate star name',
		body: () =>
			encode(
				`${CANONICAL_HEAD}\nA,classical_fundamental,5,5,0.01,1.2,0.05\nA,classical_fundamental,6,5,0.01,1.2,0.05\n`
			),
		status: 422,
		expect: /^line\/3\/star: "A": the same star is on line 2/
	},
	{
		name: 'a non-UTF-8 (Latin-1) file',
		body: () =>
			Uint8Array.from([
				...encode(`${CANONICAL_HEAD}\nC`),
				0xe9,
				...encode('ph,classical_fundamental,5,5,0.01,1.2,0.05\n')
			]),
		status: 422,
		expect: /^line\/2: "byte 0xe9 at offset \d+": the file is not UTF-8 text/
	},
	{
		name: 'a formula-injection cell',
		body: () => encode(`${CANONICAL_HEAD},reference\nA,classical_fundamental,5,5,0.01,1.2,0.05,=cmd|' /C calc'!A0\n`),
		status: 422,
		expect: /^line\/2\/reference: "=cmd\|' \/C calc'!A0": starts like a spreadsheet formula/
	},
	{
		name: 'a 50 MB file',
		body: () => new Uint8Array(50 * 1024 * 1024).fill(0x41),
		status: 413,
		expect: /larger than 33554432 bytes/
	},
	{
		name: 'a spreadsheet sent instead of CSV',
		body: () => encode('PK\u0003\u0004'),
		mediaType: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
		status: 415,
		expect: /text\/csv or text\/tab-separated-values/
	}
];

describe('bad uploads store nothing', () => {
	test.each(BAD_UPLOADS)('$name: $status with a row-level message, no rows and no object', async (bad) => {
		const slug = await newSet();
		const bytes = bad.body();
		const error = await upload(slug, bytes, bad.mediaType ? { mediaType: bad.mediaType } : {}).catch((e) => e);
		expect(error).toBeInstanceOf(RegistryError);
		expect((error as RegistryError).status).toBe(bad.status);
		const messages =
			(error as RegistryError).errors.length > 0
				? (error as RegistryError).errors.map((e) => `${e.path}: ${e.message}`)
				: [(error as RegistryError).message];
		expect(messages.some((message) => bad.expect.test(message))).toBe(true);
		expect(await orm.em.fork().count(CalibratorRevision, { calibratorSet: { slug } })).toBe(0);
		expect(await store.storage.exists(`${SOURCE_PREFIX}/sha256/${sha(bytes)}`)).toBe(false);
	});

	test('a refusal lists every bad row, with line, column, value and reason', async () => {
		const slug = await newSet();
		const bytes = encode(
			`${CANONICAL_HEAD}\nA,classical_fundamental,-1,5,0.01,1.2,0.05\nB,cepheid,5,x,0.01,1.2,0.05\nC,classical_fundamental,5,5,-1,1.2,0.05\n`
		);
		const error = (await upload(slug, bytes).catch((e) => e)) as RegistryError;
		expect(error.extra.issues).toEqual([
			{ line: 2, column: 'period_days', value: '-1', reason: 'must be positive' },
			{ line: 3, column: 'population', value: 'cepheid', reason: expect.stringContaining('not a population id') },
			{ line: 3, column: 'mag_V', value: 'x', reason: 'is not a number' },
			{ line: 4, column: 'mag_err_V', value: '-1', reason: 'must not be negative' }
		]);
	});

	test('only members of the owning group upload', async () => {
		const slug = await newSet();
		const error = (await upload(slug, encode(hostCalibratorCsv()), {}, outsider).catch((e) => e)) as RegistryError;
		expect(error.status).toBe(403);
	});
});

describe('a good upload', () => {
	test('stores the row and the original file together, with both digests', async () => {
		const slug = await newSet();
		const bytes = encode(hostCalibratorCsv());
		const revision = await upload(slug, bytes);
		expect(revision.number).toBe(1);
		expect(revision.rowCount).toBe(40);
		// source_sha256 from node:crypto (OpenSSL), independent of the storage code.
		expect(revision.sourceSha256).toBe(sha(bytes));
		expect(Buffer.from(await store.storage.get(revision.sourceKey))).toEqual(Buffer.from(bytes));
		const stored = await orm.em.fork().findOneOrFail(CalibratorRevision, revision.id);
		const content = stored.content as unknown as CalibratorRevisionContent & { digest: string };
		expect(stored.digest).toBe(calibratorRevisionDigest(content));
		expect(content.source_file.digest).toBe(`sha256:${sha(bytes)}`);
		expect(await orm.em.fork().count(AuditEvent, { kind: 'calibrator-revision-uploaded', subject: `${slug}#1` })).toBe(
			1
		);
	});

	test('a negative parallax is kept as measured when the curator asks, for parallax-space fits', async () => {
		const slug = await newSet();
		const revision = await upload(slug, encode(`${CANONICAL_HEAD}\nA,classical_fundamental,5,5,0.01,-0.2,0.05\n`), {
			keepNonPositiveParallax: true
		});
		const stored = await orm.em.fork().findOneOrFail(CalibratorRevision, revision.id);
		const content = stored.content as unknown as CalibratorRevisionContent;
		expect(content.rows[0].values.parallax_mas).toBe(-0.2);
	});

	test('TSV with a column mapping and units is converted to canonical fields', async () => {
		const slug = await newSet();
		const tsv =
			'Name\tMode\tlogP\tWvi\tWvi_e\tmu\tmu_e\nInvented Q\tclassical_fundamental\t1.0\t12.6\t0.05\t18.5\t0.03\n';
		const revision = await upload(slug, encode(tsv), {
			mediaType: 'text/tab-separated-values',
			mapping: {
				Name: { field: 'star' },
				Mode: { field: 'population' },
				logP: { field: 'period_days', unit: 'log10_d' },
				Wvi: { field: 'mag_W_VI' },
				Wvi_e: { field: 'mag_err_W_VI' },
				mu: { field: 'mu_host' },
				mu_e: { field: 'mu_host_err' }
			}
		});
		const content = revision.content as unknown as CalibratorRevisionContent;
		expect(content.rows[0].values.period_days).toBeCloseTo(10, 12);
		expect(content.columns).toContainEqual({ field: 'period_days', source_column: 'logP', unit: 'log10_d' });
	});

	test('revisions are numbered, diffed by cross_id, exported as CSV, and immutable in the database', async () => {
		const slug = await newSet();
		const first = hostCalibratorCsv();
		await upload(slug, encode(first));
		const renamed = first.replace('Invented synthetic-0001,9000,', 'Invented renamed star,9000,');
		const second = await upload(slug, encode(renamed));
		expect(second.number).toBe(2);
		const diff = await diffRevisions(orm.em.fork(), slug, 1, 2);
		expect(diff.added).toEqual([]);
		expect(diff.removed).toEqual([]);
		expect(diff.changed).toEqual([
			{ star: 'Invented renamed star', previousName: 'Invented synthetic-0001', matchedBy: 'cross_id', changes: [] }
		]);
		expect(revisionCsv(second).split('\n')[0]).toBe(
			'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err,host,reference'
		);
		const connection = orm.em.getConnection();
		await expect(
			connection.execute(`update app_calibrator_revision set note = 'changed' where id = ?`, [second.id])
		).rejects.toThrow(/frozen: UPDATE is not allowed/);
		await expect(connection.execute(`delete from app_calibrator_revision where id = ?`, [second.id])).rejects.toThrow(
			/frozen: DELETE is not allowed/
		);
	});
});
