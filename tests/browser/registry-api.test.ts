import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import {
	relationVersionDigest,
	syntheticCalibrators,
	verifyDigest,
	type RelationVersionContent
} from '../../src/lib/calibration/index';
import { CalibratorRevision, RelationVersion } from '../../src/lib/server/entities/index';
import { createBearerToken, createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';

/**
 * The registry's write API over HTTP against the production build: bearer tokens, problem+json,
 * the local S3 server and the in-process job worker.
 */
const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
let orm: MikroORM;
let group: string;
let curatorToken: string;
let reviewerTokens: string[];

test.beforeAll(async () => {
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('registry-api'));
	const curator = await createPerson(orm, {
		label: 'api curator',
		roles: ['reader', 'curator'],
		groups: [{ group, standing: 'member' }]
	});
	curatorToken = await createBearerToken(orm, curator.id, ['write']);
	reviewerTokens = [];
	for (const label of ['api reviewer a', 'api reviewer b']) {
		const reviewer = await createPerson(orm, {
			label,
			roles: ['reader', 'reviewer'],
			groups: [{ group, standing: 'member' }]
		});
		reviewerTokens.push(await createBearerToken(orm, reviewer.id, ['review', 'write']));
	}
});

test.afterAll(async () => {
	await orm?.close(true);
});

async function call(token: string, method: string, path: string, body?: unknown, contentType = 'application/json') {
	const response = await fetch(`${origin}${path}`, {
		method,
		headers: {
			authorization: `Bearer ${token}`,
			...(body === undefined ? {} : { 'content-type': contentType })
		},
		body:
			body === undefined
				? undefined
				: body instanceof Uint8Array
					? Buffer.from(body)
					: typeof body === 'string'
						? body
						: JSON.stringify(body)
	});
	const text = await response.text();
	return { status: response.status, headers: response.headers, body: text ? JSON.parse(text) : null };
}

function hostCsv(seed: number): string {
	const points = syntheticCalibrators({ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 }, { count: 40, seed });
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		...points.map(
			(p, i) =>
				`Invented ${p.star},${7000 + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},${(p.absMag + 18.5).toFixed(4)},${p.absMagErr.toFixed(4)},18.5,0.03`
		)
	].join('\n');
}

const FIT = {
	band: 'W_VI',
	population: 'classical_fundamental',
	anchor: 'host',
	method: 'ml_scatter',
	clipping: { sigma: 3, max_iterations: 5 }
};

async function setWithRevision(): Promise<string> {
	const slug = uniqueSlug('api-set');
	const created = await call(curatorToken, 'POST', '/api/v1/calibrator-sets', {
		slug,
		title: 'Invented host Cepheids',
		group,
		licence: 'CC0-1.0',
		citations: ['Invented 2026']
	});
	expect(created.status).toBe(201);
	const uploaded = await call(
		curatorToken,
		'POST',
		`/api/v1/calibrator-sets/${slug}/revisions?name=host.csv`,
		hostCsv(5),
		'text/csv'
	);
	expect(uploaded.status).toBe(201);
	return slug;
}

async function newRelation(): Promise<string> {
	const slug = uniqueSlug('api-w-vi');
	const created = await call(curatorToken, 'POST', '/api/v1/relations', {
		slug,
		title: 'Invented W_VI relation',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group
	});
	expect(created.status).toBe(201);
	expect(created.body).toMatchObject({ magnitude_system: 'Vega', required_approvals: 1, current_version: null });
	return slug;
}

test('upload → fit → propose → request changes → revise → approve: the version digest is the engine’s', async () => {
	const set = await setWithRevision();

	const bad = await call(
		curatorToken,
		'POST',
		`/api/v1/calibrator-sets/${set}/revisions`,
		'star,population,period_days\nA,classical_fundamental,-2\nB,classical_fundamental,abc\n',
		'text/csv'
	);
	expect(bad.status).toBe(422);
	expect(bad.headers.get('content-type')).toContain('application/problem+json');
	expect(bad.body.errors).toEqual([
		{ path: 'line/2/period_days', message: '"-2": must be positive' },
		{ path: 'line/3/period_days', message: '"abc": is not a number' }
	]);
	expect(await orm.em.fork().count(CalibratorRevision, { calibratorSet: { slug: set } })).toBe(1);

	const relation = await newRelation();
	const fit = await call(curatorToken, 'POST', '/api/v1/fits', { calibrator_set: set, revision: 1, ...FIT });
	expect(fit.status).toBe(200);
	expect(fit.body.state).toBe('succeeded');
	expect(fit.body.result.n_used).toBeGreaterThan(30);

	const proposed = await call(curatorToken, 'POST', `/api/v1/relations/${relation}/proposals`, {
		fit: fit.body.id,
		title: 'First calibration',
		rationale: 'Fitted with *ML* scatter.',
		submit: true
	});
	expect(proposed.status).toBe(201);
	expect(proposed.body).toMatchObject({ state: 'in_review', base_version: null });
	const id = proposed.body.id;

	const changes = await call(reviewerTokens[0], 'POST', `/api/v1/proposals/${id}/reviews`, {
		decision: 'request_changes',
		comment: 'Say why clipping at 3σ.'
	});
	expect(changes.status).toBe(201);
	expect(changes.body.state).toBe('changes_requested');

	const revised = await call(curatorToken, 'PATCH', `/api/v1/proposals/${id}`, {
		rationale: 'Fitted with *ML* scatter; 3σ clipping removes two invented outliers.'
	});
	expect(revised.status).toBe(200);
	expect((await call(curatorToken, 'POST', `/api/v1/proposals/${id}/submit`)).body.state).toBe('in_review');

	const listed = await call(reviewerTokens[0], 'GET', `/api/v1/proposals?relation=${relation}&awaiting=me`);
	expect(listed.body.proposals.map((p: { id: string }) => p.id)).toEqual([id]);

	const approved = await call(reviewerTokens[0], 'POST', `/api/v1/proposals/${id}/reviews`, { decision: 'approve' });
	expect(approved.status).toBe(201);
	expect(approved.body.state).toBe('approved');
	expect(approved.headers.get('location')).toBe(`/api/v1/relations/${relation}/versions/1`);
	const stored = await orm.em.fork().findOneOrFail(RelationVersion, { relation: { slug: relation }, number: 1 });
	const content = stored.content as unknown as RelationVersionContent & { digest: string };
	expect(approved.body.frozen_version).toEqual({ ref: `${relation}@1`, version: 1, digest: stored.digest });
	expect(relationVersionDigest(content)).toBe(stored.digest);
	expect(verifyDigest(content)).toMatchObject({ ok: true, computed: stored.digest });
	expect(content.coefficients.zero_point).toBeCloseTo(fit.body.result.coefficients.zero_point, 12);
});

test('two approvals with the same base at the same moment: one version, one 409 stale-base', async () => {
	const set = await setWithRevision();
	const relation = await newRelation();
	const ids: string[] = [];
	for (const title of ['One', 'Two']) {
		const fit = await call(curatorToken, 'POST', '/api/v1/fits', { calibrator_set: set, revision: 1, ...FIT });
		const proposed = await call(curatorToken, 'POST', `/api/v1/relations/${relation}/proposals`, {
			fit: fit.body.id,
			title,
			submit: true
		});
		ids.push(proposed.body.id);
	}
	const responses = await Promise.all(
		ids.map((id, i) => call(reviewerTokens[i], 'POST', `/api/v1/proposals/${id}/reviews`, { decision: 'approve' }))
	);
	expect(responses.map((r) => r.status).sort()).toEqual([201, 409]);
	const conflict = responses.find((r) => r.status === 409)!;
	expect(conflict.body).toMatchObject({ type: '/docs/problems#stale-base', code: 'stale-base', status: 409 });
	expect(await orm.em.fork().count(RelationVersion, { relation: { slug: relation } })).toBe(1);
	const loser = ids[responses.indexOf(conflict)];
	expect((await call(curatorToken, 'GET', `/api/v1/proposals/${loser}`)).body).toMatchObject({
		state: 'in_review',
		stale: true,
		current_version: 1
	});
});

test('a large bootstrap answers 202 with a job that the worker finishes', async () => {
	const set = await setWithRevision();
	const queued = await call(curatorToken, 'POST', '/api/v1/fits', {
		calibrator_set: set,
		revision: 1,
		...FIT,
		bootstrap: { resamples: 200, seed: 7 }
	});
	expect(queued.status).toBe(202);
	const location = queued.headers.get('location')!;
	expect(location).toBe(`/api/v1/jobs/${queued.body.id}`);
	let job = queued.body;
	for (let i = 0; i < 60 && job.state !== 'succeeded' && job.state !== 'failed'; i++) {
		await new Promise((resolve) => setTimeout(resolve, 500));
		job = (await call(curatorToken, 'GET', location)).body;
	}
	expect(job).toMatchObject({ state: 'succeeded', progress: 1 });
	expect(job.result.bootstrap.resamples).toBe(200);
});

test('uploads over the size limit, in other media types, or with a bad mapping are refused', async () => {
	const set = uniqueSlug('api-limits');
	await call(curatorToken, 'POST', '/api/v1/calibrator-sets', {
		slug: set,
		title: 'Limits',
		group,
		licence: 'CC0-1.0'
	});
	const huge = new Uint8Array(50 * 1024 * 1024).fill(0x41);
	const tooLarge = await call(curatorToken, 'POST', `/api/v1/calibrator-sets/${set}/revisions`, huge, 'text/csv');
	expect(tooLarge.status).toBe(413);
	const wrongType = await call(
		curatorToken,
		'POST',
		`/api/v1/calibrator-sets/${set}/revisions`,
		'a',
		'application/vnd.ms-excel'
	);
	expect(wrongType.status).toBe(415);
	const badMapping = await call(
		curatorToken,
		'POST',
		`/api/v1/calibrator-sets/${set}/revisions?mapping=${encodeURIComponent('{"x":1}')}`,
		'a',
		'text/csv'
	);
	expect(badMapping.status).toBe(422);
	expect(await orm.em.fork().count(CalibratorRevision, { calibratorSet: { slug: set } })).toBe(0);
});

test('two revisions diff by cross_id: a renamed star is a rename, not a removal plus an addition', async () => {
	const set = await setWithRevision();
	const renamed = hostCsv(5).replace('Invented synthetic-0002,7001,', 'Invented renamed,7001,');
	expect(
		(await call(curatorToken, 'POST', `/api/v1/calibrator-sets/${set}/revisions`, renamed, 'text/csv')).status
	).toBe(201);
	const response = await fetch(`${origin}/api/v1/calibrator-sets/${set}/diff?from=1&to=2`);
	expect(response.status).toBe(200);
	expect(await response.json()).toMatchObject({
		added: [],
		removed: [],
		changed: [
			{ star: 'Invented renamed', previous_name: 'Invented synthetic-0002', matched_by: 'cross_id', changes: [] }
		],
		unchanged_count: 39
	});
});

test('a pinned version: same bytes every time, digest recomputes, 304 on its ETag, Content-Digest checks out in Python', async () => {
	const set = await setWithRevision();
	const relation = await newRelation();
	const fit = await call(curatorToken, 'POST', '/api/v1/fits', { calibrator_set: set, revision: 1, ...FIT });
	const proposed = await call(curatorToken, 'POST', `/api/v1/relations/${relation}/proposals`, {
		fit: fit.body.id,
		title: 'Pinned',
		submit: true
	});
	expect(
		(await call(reviewerTokens[0], 'POST', `/api/v1/proposals/${proposed.body.id}/reviews`, { decision: 'approve' }))
			.status
	).toBe(201);

	const first = await fetch(`${origin}/api/v1/relations/${relation}/versions/1`);
	const second = await fetch(`${origin}/api/v1/pins/${relation}@1`);
	const [a, b] = [Buffer.from(await first.arrayBuffer()), Buffer.from(await second.arrayBuffer())];
	expect(first.status).toBe(200);
	expect(a.equals(b)).toBe(true);
	const body = JSON.parse(a.toString('utf8')) as RelationVersionContent & { digest: string };
	// The digest rule: remove `digest`, RFC 8785 canonical JSON of the rest, sha256.
	expect(verifyDigest(body)).toMatchObject({ ok: true, computed: body.digest });
	expect(first.headers.get('etag')).toBe(`"${body.digest}"`);
	expect(first.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');

	const again = await fetch(`${origin}/api/v1/pins/${relation}@1`, {
		headers: { 'if-none-match': `"${body.digest}"` }
	});
	expect(again.status).toBe(304);
	expect((await again.arrayBuffer()).byteLength).toBe(0);

	// A client outside the project: Python's standard library fetches the pin and checks RFC 9530 Content-Digest.
	const { spawnSync } = await import('node:child_process');
	const python = spawnSync(
		'/usr/bin/python3',
		[
			'-c',
			[
				'import base64, hashlib, json, sys, urllib.request',
				'with urllib.request.urlopen(sys.argv[1]) as r:',
				'    body = r.read(); header = r.headers["Content-Digest"]',
				'expected = "sha-256=:" + base64.b64encode(hashlib.sha256(body).digest()).decode() + ":"',
				'print(json.dumps({"ok": header == expected, "ref": json.loads(body)["ref"]}))'
			].join('\n'),
			`${origin}/api/v1/pins/${relation}@1`
		],
		{ encoding: 'utf8' }
	);
	expect(python.stderr).toBe('');
	expect(JSON.parse(python.stdout)).toEqual({ ok: true, ref: `${relation}@1` });

	expect((await fetch(`${origin}/api/v1/pins/${relation}@2`)).status).toBe(404);
	expect((await fetch(`${origin}/api/v1/pins/not-a-ref`)).status).toBe(404);
	const bands = await (await fetch(`${origin}/api/v1/bands`)).json();
	expect(bands.items.map((band: { id: string }) => band.id)).toEqual(
		expect.arrayContaining(['V', 'Ks', 'W_VI', 'W_G', 'IRAC36'])
	);
});
