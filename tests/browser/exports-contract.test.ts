import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type APIRequestContext, type APIResponse } from '@playwright/test';
import { fieldDefinition, syntheticCalibrators, verifyDigest } from '../../src/lib/calibration/index';
import { contentDigest } from '../../src/lib/publishing/content-digest';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * Calibrator-set reads, revision exports and the deposit archive over HTTP against the production
 * build, checked against the OpenAPI document and against clients outside the project: Debian's
 * python3-astropy, xmllint (libxml2-utils) with the IVOA schema astropy ships, and Python's standard
 * library.
 */
const PYTHON = '/usr/bin/python3';
const PYTHON_SUPPORT = join(import.meta.dirname, '..', 'support', 'python');
// Debian 12 python3-astropy 5.2.1-2+deb12u1 ships the IVOA VOTable 1.4 schema here.
const VOTABLE_XSD = '/usr/lib/python3/dist-packages/astropy/io/votable/data/VOTable.v1.4.xsd';
const ASTROPY_PACKAGE = { name: 'python3-astropy', version: '5.2.1' };
const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;

const SETS = 'GET /api/v1/calibrator-sets';
const SET = 'GET /api/v1/calibrator-sets/{slug}';
const REVISION = 'GET /api/v1/calibrator-sets/{slug}/revisions/{n}';
const ARCHIVE = 'GET /api/v1/export';

let orm: MikroORM;
let group: string;
let curatorToken: string;
let reviewerToken: string;
/** A member of the owning group: with read:private, and without it. */
let memberToken: string;
let memberTokenWithoutScope: string;
/** Not in the group, though the token has read:private. */
let outsiderToken: string;
/** A curator of another group: may fit and upload, but not to this group's private set. */
let outsiderCuratorId: string;
let outsiderCuratorToken: string;
let publicSet: string;
let privateSet: string;
let publicRelation: string;
let privateRelation: string;
let embargoedRelation: string;
const work = mkdtempSync(join(tmpdir(), 'candlebook-exports-'));

const bearer = (token: string) => ({ authorization: `Bearer ${token}` });

async function call(token: string, method: string, path: string, body?: unknown, contentType = 'application/json') {
	const response = await fetch(`${origin}${path}`, {
		method,
		headers: { ...bearer(token), ...(body === undefined ? {} : { 'content-type': contentType }) },
		body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body)
	});
	const text = await response.text();
	expect(response.status, `${method} ${path}: ${text}`).toBeLessThan(300);
	return text ? JSON.parse(text) : null;
}

/**
 * Invented host Cepheids plus rows that stress the formats: a name with a comma, quotes, `<` and `&`,
 * a negative colour excess, empty cells, and numbers small enough that Python and ECMAScript write
 * them differently (4e-05 vs 0.00004).
 */
function calibratorCsv(seed: number): string {
	const points = syntheticCalibrators({ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 }, { count: 24, seed });
	const header = 'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err,ebv,host,reference';
	const rows = points.map(
		(p, i) =>
			`Invented ${p.star},${5000 + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},` +
			`${(p.absMag + 18.5).toFixed(4)},${p.absMagErr.toFixed(4)},18.5,0.03,${i % 5 === 0 ? '' : (((i % 7) * 10 - 20) / 1000).toFixed(3)},Invented Host,Invented 2026`
	);
	rows.push(
		'"Invented ""Quoted"", <Star> & Co",5999,classical_fundamental,12.5,9.1,0.00004,18.5,0.00002,-0.015,,"Invented, 2026"'
	);
	return [header, ...rows].join('\n') + '\n';
}

const FIT = {
	band: 'W_VI',
	population: 'classical_fundamental',
	anchor: 'host',
	method: 'ml_scatter',
	clipping: { sigma: 3, max_iterations: 5 }
};

async function newSet(visibility: 'public' | 'group', revisions: number): Promise<string> {
	const slug = uniqueSlug(`export-${visibility}`);
	await call(curatorToken, 'POST', '/api/v1/calibrator-sets', {
		slug,
		title: `Invented ${visibility} host Cepheids (demo)`,
		description: 'Invented calibrators for the export tests.',
		group,
		licence: 'CC-BY-4.0',
		citations: ['Invented Survey Team 2026, Invented Journal 1, 1', 'Second invented citation'],
		visibility
	});
	for (let n = 1; n <= revisions; n++) {
		await call(
			curatorToken,
			'POST',
			`/api/v1/calibrator-sets/${slug}/revisions?name=host.csv`,
			calibratorCsv(n),
			'text/csv'
		);
	}
	return slug;
}

/** Fit → propose → approve: one frozen version 1. */
async function frozenRelation(set: string, visibility: 'public' | 'group', embargoUntil: string | null) {
	const slug = uniqueSlug(`export-relation-${visibility}`);
	await call(curatorToken, 'POST', '/api/v1/relations', {
		slug,
		title: 'Invented W_VI relation (demo)',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group,
		visibility
	});
	const fit = await call(curatorToken, 'POST', '/api/v1/fits', { calibrator_set: set, revision: 1, ...FIT });
	const proposal = await call(curatorToken, 'POST', `/api/v1/relations/${slug}/proposals`, {
		fit: fit.id,
		title: 'First',
		embargo_until: embargoUntil,
		submit: true
	});
	await call(reviewerToken, 'POST', `/api/v1/proposals/${proposal.id}/reviews`, { decision: 'approve' });
	return slug;
}

test.beforeAll(async () => {
	test.setTimeout(120_000);
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('exports'));
	const curator = await createPerson(orm, {
		label: 'export curator',
		roles: ['reader', 'curator'],
		groups: [{ group, standing: 'member' }]
	});
	// A token reaches its group's private and embargoed work only with read:private.
	curatorToken = await createBearerToken(orm, curator.id, ['write', 'read:private']);
	const reviewer = await createPerson(orm, {
		label: 'export reviewer',
		roles: ['reader', 'reviewer'],
		groups: [{ group, standing: 'member' }]
	});
	reviewerToken = await createBearerToken(orm, reviewer.id, ['review', 'read:private']);
	const member = await createPerson(orm, {
		label: 'export member',
		roles: ['reader'],
		groups: [{ group, standing: 'member' }]
	});
	memberToken = await createBearerToken(orm, member.id, ['read:private']);
	memberTokenWithoutScope = await createBearerToken(orm, member.id, []);
	const outsider = await createPerson(orm, { label: 'export outsider', roles: ['reader'] });
	outsiderToken = await createBearerToken(orm, outsider.id, ['read:private']);
	const outsiderCurator = await createPerson(orm, { label: 'export outside curator', roles: ['reader', 'curator'] });
	outsiderCuratorId = outsiderCurator.id;
	outsiderCuratorToken = await createBearerToken(orm, outsiderCurator.id, ['write', 'read:private']);

	publicSet = await newSet('public', 2);
	privateSet = await newSet('group', 1);
	publicRelation = await frozenRelation(publicSet, 'public', null);
	privateRelation = await frozenRelation(publicSet, 'group', null);
	embargoedRelation = await frozenRelation(publicSet, 'public', new Date(Date.now() + 30 * 86_400_000).toISOString());
});

test.afterAll(async () => {
	await orm?.close(true);
	rmSync(work, { recursive: true, force: true });
});

async function bytesOf(response: APIResponse) {
	return Buffer.from(await response.body());
}

async function allSetSlugs(request: APIRequestContext, headers: Record<string, string> = {}) {
	const slugs: string[] = [];
	let cursor: string | null = null;
	do {
		const response: APIResponse = await request.get(
			`/api/v1/calibrator-sets?q=export-&limit=2${cursor ? `&cursor=${cursor}` : ''}`,
			{ headers }
		);
		await expectMatchesOpenApi(request, response, SETS);
		const page = (await response.json()) as { items: { slug: string }[]; next_cursor: string | null };
		slugs.push(...page.items.map((item: { slug: string }) => item.slug));
		cursor = page.next_cursor;
	} while (cursor);
	return slugs;
}

test('the set list pages by cursor, searches, counts revisions and names the latest digest', async ({ request }) => {
	const response = await request.get(`/api/v1/calibrator-sets?q=${publicSet}`);
	await expectMatchesOpenApi(request, response, SETS);
	const page = await response.json();
	expect(page.items.map((item: { slug: string }) => item.slug)).toEqual([publicSet]);
	const detail = await (await request.get(`/api/v1/calibrator-sets/${publicSet}`)).json();
	expect(page.items[0]).toMatchObject({
		slug: publicSet,
		visibility: 'public',
		licence: 'CC-BY-4.0',
		group,
		revision_count: 2,
		latest: { revision: 2, digest: detail.revisions[1].digest }
	});

	// Paging two at a time walks every matching set exactly once, in slug order.
	const anonymous = await allSetSlugs(request);
	expect(anonymous).toEqual([...new Set(anonymous)].sort());
	expect(anonymous).toContain(publicSet);

	const bad = await request.get('/api/v1/calibrator-sets?limit=0');
	expect(bad.status()).toBe(400);
	await expectMatchesOpenApi(request, bad, SETS);
	const forged = await request.get('/api/v1/calibrator-sets?cursor=not-a-cursor');
	expect(forged.status()).toBe(400);
	expect((await forged.json()).errors).toEqual([{ path: 'cursor', message: 'unknown cursor' }]);
});

test('a set lists every revision with who uploaded it and links to the three exports', async ({ request }) => {
	const response = await request.get(`/api/v1/calibrator-sets/${publicSet}`);
	await expectMatchesOpenApi(request, response, SET);
	const set = await response.json();
	expect(set.revisions.map((revision: { revision: number }) => revision.revision)).toEqual([1, 2]);
	expect(set.revisions[0]).toMatchObject({
		rows: 25,
		created_by: { display_name: 'Test export curator' },
		exports: { csv: `/api/v1/calibrator-sets/${publicSet}/revisions/1?format=csv` }
	});
	const missing = await request.get('/api/v1/calibrator-sets/no-such-set');
	expect(missing.status()).toBe(404);
	await expectMatchesOpenApi(request, missing, SET);
});

test('each format answers with the documented media type, the same bytes every time, and 304 on its ETag', async ({
	request
}) => {
	const path = `/api/v1/calibrator-sets/${publicSet}/revisions/1`;
	const digest = (await (await request.get(`/api/v1/calibrator-sets/${publicSet}`)).json()).revisions[0].digest;
	const asked = [
		{ query: '?format=json', accept: undefined, type: 'application/json' },
		{ query: '?format=csv', accept: undefined, type: 'text/csv' },
		{ query: '?format=votable', accept: undefined, type: 'application/x-votable+xml' },
		{ query: '', accept: 'text/csv', type: 'text/csv' },
		{ query: '', accept: 'application/x-votable+xml;q=0.9, application/json;q=0.5', type: 'application/x-votable+xml' },
		{ query: '', accept: undefined, type: 'application/json' }
	];
	const etags = new Set<string>();
	for (const { query, accept, type } of asked) {
		const headers: Record<string, string> = accept ? { accept } : {};
		const first = await request.get(path + query, { headers });
		await expectMatchesOpenApi(request, first, REVISION);
		const second = await request.get(path + query, { headers });
		const [a, b] = [await bytesOf(first), await bytesOf(second)];
		const label = `${query || accept || 'no Accept'}`;
		expect(first.headers()['content-type'].split(';')[0], label).toBe(type);
		expect(a.equals(b), label).toBe(true);
		expect(first.headers()['content-digest'], label).toBe(contentDigest(a));
		expect(first.headers()['cache-control'], label).toBe('public, max-age=31536000, immutable');
		expect(first.headers()['candlebook-revision-digest'], label).toBe(digest);
		expect(first.headers()['link'], label).toContain('<https://spdx.org/licenses/CC-BY-4.0.html>; rel="license"');
		const etag = first.headers()['etag'];
		expect(etag).toBe(second.headers()['etag']);
		etags.add(etag);
		const again = await request.get(path + query, { headers: { ...headers, 'if-none-match': etag } });
		expect(again.status(), label).toBe(304);
		expect((await again.body()).byteLength).toBe(0);
		await expectMatchesOpenApi(request, again, REVISION);
	}
	// One ETag per representation: JSON, CSV and VOTable.
	expect(etags.size).toBe(3);

	const json = await (await request.get(`${path}?format=json`)).json();
	expect(verifyDigest(json.content)).toMatchObject({ ok: true, computed: digest });
	expect(json).toMatchObject({
		digest,
		licence: 'CC-BY-4.0',
		citations: expect.arrayContaining(['Second invented citation'])
	});

	const unknown = await request.get(`${path}?format=xlsx`);
	expect(unknown.status()).toBe(400);
	await expectMatchesOpenApi(request, unknown, REVISION);
	const missing = await request.get(`/api/v1/calibrator-sets/${publicSet}/revisions/9`);
	expect(missing.status()).toBe(404);
	await expectMatchesOpenApi(request, missing, REVISION);
});

test('a private set is invisible without a member’s read:private token, everywhere', async ({ request }) => {
	const paths = [
		`/api/v1/calibrator-sets/${privateSet}`,
		...['json', 'csv', 'votable'].map((format) => `/api/v1/calibrator-sets/${privateSet}/revisions/1?format=${format}`),
		`/api/v1/calibrator-sets/${privateSet}/diff?from=1&to=1`
	];
	for (const [who, headers] of [
		['anonymous', {}],
		['outsider with read:private', bearer(outsiderToken)],
		['member token without read:private', bearer(memberTokenWithoutScope)]
	] as const) {
		for (const path of paths) {
			const response = await request.get(path, { headers });
			expect(response.status(), `${who} ${path}`).toBe(404);
			expect(await response.text(), `${who} ${path}`).not.toContain('Invented');
		}
		expect(await allSetSlugs(request, headers), who).not.toContain(privateSet);
	}
	expect(await allSetSlugs(request, bearer(memberToken))).toEqual(expect.arrayContaining([privateSet, publicSet]));
	const seen = await request.get(`/api/v1/calibrator-sets/${privateSet}/revisions/1?format=csv`, {
		headers: bearer(memberToken)
	});
	expect(seen.status()).toBe(200);
	expect(seen.headers()['cache-control']).toBe('private, no-cache');
	expect(seen.headers()['vary']).toContain('Authorization');
	await expectMatchesOpenApi(request, seen, REVISION);
	const detail = await request.get(`/api/v1/calibrator-sets/${privateSet}`, { headers: bearer(memberToken) });
	await expectMatchesOpenApi(request, detail, SET);
	expect((await detail.json()).visibility).toBe('group');
});

test('a private set stays hidden from other groups in pages, fits, uploads, digest lookups and star searches', async ({
	request,
	page,
	baseURL
}) => {
	const own = await (
		await request.get(`/api/v1/calibrator-sets/${privateSet}/revisions/1?format=json`, { headers: bearer(memberToken) })
	).json();
	const outsider = bearer(outsiderCuratorToken);
	const fit = await request.post('/api/v1/fits', {
		headers: outsider,
		data: { calibrator_set: privateSet, revision: 1, ...FIT }
	});
	expect(fit.status(), await fit.text()).toBe(404);
	const upload = await request.post(`/api/v1/calibrator-sets/${privateSet}/revisions?name=x.csv`, {
		headers: { ...outsider, 'content-type': 'text/csv' },
		data: calibratorCsv(9)
	});
	expect(upload.status()).toBe(404);
	expect(await upload.text()).not.toContain(group);
	const lookup = await request.get(`/api/v1/digests/${own.digest}`, { headers: outsider });
	expect(lookup.status()).toBe(404);
	expect((await request.get(`/api/v1/digests/${own.digest}`, { headers: bearer(memberToken) })).status()).toBe(200);

	const star = own.content.rows[0].star as string;
	const search = async (headers: Record<string, string>) => {
		const response = await request.get(`/api/v1/stars?q=${encodeURIComponent(star)}`, { headers });
		expect(response.status()).toBe(200);
		return ((await response.json()).items as { calibrator_set: string }[]).map((item) => item.calibrator_set);
	};
	expect(await search(outsider)).not.toContain(privateSet);
	expect(await search(bearer(memberToken))).toContain(privateSet);

	// The same in the pages, for a signed-in curator of another group.
	await page
		.context()
		.addCookies([
			{ name: 'candlebook_session', value: await createSessionCookie(orm, outsiderCuratorId), url: baseURL! }
		]);
	for (const path of [`/calibrator-sets/${privateSet}`, `/calibrator-sets/${privateSet}/upload`]) {
		const response = await page.goto(path);
		expect(response?.status(), path).toBe(404);
	}
	await page.goto('/calibrator-sets');
	await expect(page.getByRole('link', { name: /Invented public host Cepheids/ }).first()).toBeVisible();
	expect(await page.content()).not.toContain(privateSet);
	await page.goto(`/relations/${publicRelation}/refit`);
	expect(await page.content()).not.toContain(privateSet);
});

test('astropy reads the VOTable and the CSV over HTTP with exactly the JSON export’s numbers; xmllint validates the VOTable', async ({
	request
}) => {
	const path = `/api/v1/calibrator-sets/${publicSet}/revisions/2`;
	const json = await (await request.get(`${path}?format=json`)).json();
	const fields: string[] = json.content.columns.map((column: { field: string }) => column.field);
	const rows: { star: string; values: Record<string, unknown> }[] = json.content.rows;

	const run = spawnSync(PYTHON, [join(PYTHON_SUPPORT, 'read_revision_exports.py'), `${origin}${path}`], {
		encoding: 'utf8'
	});
	expect(run.status, run.stderr).toBe(0);
	const read = JSON.parse(run.stdout) as {
		astropy: string;
		votable: {
			names: string[];
			rows: unknown[][];
			infos: Record<string, string[]>;
			units: Record<string, string | null>;
		};
		csv: { names: string[]; rows: unknown[][]; link: string };
	};
	expect(read.astropy).toBe(ASTROPY_PACKAGE.version);
	expect(read.votable.names).toEqual(fields);
	expect(read.csv.names).toEqual(fields);
	expect(read.votable.rows).toHaveLength(rows.length);
	expect(read.csv.rows).toHaveLength(rows.length);

	// Tolerance: none. Both exports write each double as its shortest round-trip decimal (ECMAScript
	// Number::toString), which Python's float() reads back to the identical double.
	let numbers = 0;
	rows.forEach((row, i) => {
		fields.forEach((field, j) => {
			const expected = row.values[field] ?? null;
			const numeric = fieldDefinition(field)?.kind === 'number';
			for (const [format, actual] of [
				['votable', read.votable.rows[i][j]],
				['csv', read.csv.rows[i][j]]
			] as const) {
				const label = `${format} ${row.star}.${field}`;
				// An empty char cell is how VOTable writes a null string; astropy hands it back as ''.
				if (expected === null && !numeric && format === 'votable') expect(actual, label).toBe('');
				else if (expected === null) expect(actual, label).toBeNull();
				// astropy's CSV reader types a column of digits (cross_id) as integers; compare the text.
				else if (!numeric) expect(String(actual), label).toBe(String(expected));
				else {
					expect(actual, label).toBe(expected);
					numbers++;
				}
			}
		});
	});
	const numericCells = rows.flatMap((row) =>
		fields.filter((field) => fieldDefinition(field)?.kind === 'number' && row.values[field] !== null)
	);
	expect(numbers).toBe(2 * numericCells.length);
	expect(numericCells.length).toBeGreaterThan(100);
	expect(rows.some((row) => row.star.includes('"Quoted"') && row.values.ebv === -0.015)).toBe(true);

	expect(read.votable.infos.digest).toEqual([json.digest]);
	expect(read.votable.infos.licence).toEqual(['CC-BY-4.0']);
	expect(read.votable.infos.required_citation).toEqual(json.citations);
	expect(read.votable.units.mag_W_VI).toBe('mag');
	expect(read.votable.units.period_days).toBe('d');
	expect(read.csv.link).toContain('rel="license"');
	expect(read.csv.link).toContain(`${path}?format=json>; rel="describedby"`);

	const dpkg = spawnSync('dpkg-query', ['-W', '-f=${Version}', ASTROPY_PACKAGE.name], { encoding: 'utf8' });
	expect(dpkg.stdout.startsWith(`${ASTROPY_PACKAGE.version}-`)).toBe(true);
	const file = join(work, 'revision.vot');
	writeFileSync(file, await bytesOf(await request.get(`${path}?format=votable`)));
	const lint = spawnSync('xmllint', ['--noout', '--schema', VOTABLE_XSD, file], { encoding: 'utf8' });
	expect(lint.stderr).toContain('validates');
	expect(lint.status).toBe(0);
});

test('Python’s standard library checks a pin’s Content-Digest and recomputes its digest by RFC 8785', async () => {
	const run = spawnSync(
		PYTHON,
		[join(PYTHON_SUPPORT, 'pin_digest_check.py'), `${origin}/api/v1/pins/${publicRelation}@1`],
		{
			encoding: 'utf8'
		}
	);
	expect(run.status, run.stderr).toBe(0);
	const check = JSON.parse(run.stdout);
	expect(check).toMatchObject({
		ref: `${publicRelation}@1`,
		content_digest_ok: true,
		canonical_ok: true,
		digest_ok: true
	});
	expect(check.numbers).toBeGreaterThan(10);
	// json.dumps alone reproduces RFC 8785 exactly when no number is written differently.
	expect(check.json_dumps_equal).toBe(check.numbers_unlike_json_dumps === 0);
	const measured = `${check.numbers_unlike_json_dumps} of ${check.numbers} numbers in ${check.ref} are written differently by json.dumps and RFC 8785`;
	test.info().annotations.push({ type: 'numbers', description: measured });
	console.log(measured);
});

test('the archive holds every public frozen version and revision with verifiable digests, and nothing private', async ({
	request
}) => {
	test.setTimeout(90_000);
	const started = performance.now();
	const first = await request.get('/api/v1/export');
	await expectMatchesOpenApi(request, first, ARCHIVE);
	expect(first.headers()['content-type']).toBe('application/zip');
	const zip = await bytesOf(first);
	const seconds = (performance.now() - started) / 1000;
	const second = await bytesOf(await request.get('/api/v1/export'));
	expect(createHash('sha256').update(zip).digest('hex')).toBe(createHash('sha256').update(second).digest('hex'));
	const file = join(work, 'archive.zip');
	writeFileSync(file, zip);

	const pinned = `relations/${publicRelation}/versions/1.json`;
	const csv = `calibrator-sets/${publicSet}/revisions/2.csv`;
	const run = spawnSync(PYTHON, [join(PYTHON_SUPPORT, 'verify_archive.py'), file, pinned, csv], {
		encoding: 'utf8',
		maxBuffer: 512 * 1024 * 1024
	});
	expect(run.status, run.stderr).toBe(0);
	const archive = JSON.parse(run.stdout) as {
		crc_failure: string | null;
		checked: number;
		mismatches: string[];
		unlisted: string[];
		manifest: { files: { path: string; kind: string; ref: string; sha256: string; digest: string; bytes: number }[] };
		readme: string;
		files: Record<string, string>;
	};
	expect(archive.crc_failure).toBeNull();
	expect(archive.mismatches).toEqual([]);
	expect(archive.unlisted).toEqual([]);
	expect(archive.checked).toBe(archive.manifest.files.length);
	expect(archive.readme).toContain('How to verify');
	const unpacked = archive.manifest.files.reduce((sum, entry) => sum + entry.bytes, 0);
	console.log(
		`archive: ${archive.checked} files, ${unpacked} bytes unpacked, ${zip.byteLength} bytes zipped, ${seconds.toFixed(2)} s`
	);

	const refs = archive.manifest.files.map((entry) => entry.ref);
	expect(refs).toContain(`${publicRelation}@1`);
	expect(refs.filter((ref) => ref === `${publicSet}/revisions/2`)).toHaveLength(3);
	for (const hidden of [`${privateRelation}@1`, `${embargoedRelation}@1`, `${privateSet}/revisions/1`])
		expect(refs).not.toContain(hidden);
	expect(
		archive.manifest.files.some((entry) => entry.path.includes(privateSet) || entry.path.includes(privateRelation))
	).toBe(false);

	// The archived files are the bytes the API serves.
	const pin = await bytesOf(await request.get(`/api/v1/pins/${publicRelation}@1`));
	expect(Buffer.from(archive.files[pinned], 'base64').equals(pin)).toBe(true);
	const served = await bytesOf(await request.get(`/api/v1/calibrator-sets/${publicSet}/revisions/2?format=csv`));
	expect(Buffer.from(archive.files[csv], 'base64').equals(served)).toBe(true);
	const version = JSON.parse(pin.toString('utf8'));
	expect(archive.manifest.files.find((entry) => entry.path === pinned)?.digest).toBe(version.digest);
	expect(verifyDigest(version)).toMatchObject({ ok: true });
});
