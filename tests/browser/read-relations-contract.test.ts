import { createHash } from 'node:crypto';
import { Cite } from '@citation-js/core';
import '@citation-js/plugin-bibtex';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type APIRequestContext } from '@playwright/test';
import canonicalize from 'canonicalize';
import { syntheticCalibrators } from '../../src/lib/calibration/index';
import { User } from '../../src/lib/server/entities/index';
import { createBearerToken, createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * The read API's HTTP contract against the production build: every route answers as the OpenAPI
 * document says, pinned bytes are stable and recompute to their digest by the published rule, and
 * private or embargoed content is invisible without the right token.
 */
const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
const ORCID = '0000-0002-1825-0097';
let orm: MikroORM;
let curatorToken: string;
let reviewerToken: string;
/** A member of the owning group: with read:private, and without it. */
let memberPrivate: string;
let memberPlain: string;
/** read:private, but not a member. */
let outsiderPrivate: string;
let setSlug: string;
let relation: string;
let embargoed: string;
let privateRelation: string;
const TOKEN = uniqueSlug('contract').replace('-', '');

async function call(token: string, method: string, path: string, body?: unknown, contentType = 'application/json') {
	const response = await fetch(`${origin}${path}`, {
		method,
		headers: { authorization: `Bearer ${token}`, ...(body === undefined ? {} : { 'content-type': contentType }) },
		body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body)
	});
	const text = await response.text();
	expect(response.status, `${method} ${path}: ${text}`).toBeLessThan(300);
	return text ? JSON.parse(text) : null;
}

function hostCsv(seed: number): string {
	const points = syntheticCalibrators({ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 }, { count: 40, seed });
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		...points.map(
			(p, i) =>
				`Invented ${p.star},${6000 + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},${(p.absMag + 18.5).toFixed(4)},${p.absMagErr.toFixed(4)},18.5,0.03`
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

async function newRelation(title: string, group: string, visibility: 'public' | 'group' = 'public') {
	const slug = uniqueSlug('contract-rel');
	await call(curatorToken, 'POST', '/api/v1/relations', {
		slug,
		title: `${title} ${TOKEN}`,
		description: 'An invented relation with **Markdown** <script>alert(1)</script>.',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group,
		visibility
	});
	return slug;
}

async function approve(slug: string, revision: number, embargoUntil: string | null = null) {
	const fit = await call(curatorToken, 'POST', '/api/v1/fits', { calibrator_set: setSlug, revision, ...FIT });
	const proposal = await call(curatorToken, 'POST', `/api/v1/relations/${slug}/proposals`, {
		fit: fit.id,
		title: `Revision ${revision}`,
		rationale: `Fitted on revision ${revision}.`,
		embargo_until: embargoUntil,
		submit: true
	});
	await call(reviewerToken, 'POST', `/api/v1/proposals/${proposal.id}/reviews`, { decision: 'approve' });
}

test.beforeAll(async () => {
	test.setTimeout(120_000);
	orm = await openOrm();
	const group = await createGroupRow(orm, uniqueSlug('contract'));
	const inGroup = [{ group, standing: 'member' as const }];
	const curator = await createPerson(orm, { label: 'contract curator', roles: ['reader', 'curator'], groups: inGroup });
	const reviewer = await createPerson(orm, {
		label: 'contract reviewer',
		roles: ['reader', 'reviewer'],
		groups: inGroup
	});
	const fork = orm.em.fork();
	(await fork.findOneOrFail(User, reviewer.id)).orcid = ORCID;
	await fork.flush();
	const member = await createPerson(orm, { label: 'contract member', roles: ['reader'], groups: inGroup });
	const outsider = await createPerson(orm, { label: 'contract outsider', roles: ['reader'] });
	// A token reaches its group's private and embargoed work only with read:private.
	curatorToken = await createBearerToken(orm, curator.id, ['write', 'read:private']);
	reviewerToken = await createBearerToken(orm, reviewer.id, ['review', 'write', 'read:private']);
	memberPrivate = await createBearerToken(orm, member.id, ['read:private']);
	memberPlain = await createBearerToken(orm, member.id, []);
	outsiderPrivate = await createBearerToken(orm, outsider.id, ['read:private']);

	setSlug = uniqueSlug('contract-set');
	await call(curatorToken, 'POST', '/api/v1/calibrator-sets', {
		slug: setSlug,
		title: 'Invented host Cepheids',
		group,
		licence: 'CC0-1.0',
		citations: ['Invented Survey Team (2026), Invented Journal 1, 1']
	});
	for (const seed of [5, 6])
		await call(curatorToken, 'POST', `/api/v1/calibrator-sets/${setSlug}/revisions`, hostCsv(seed), 'text/csv');

	relation = await newRelation('Contract superseded', group);
	await approve(relation, 1);
	await approve(relation, 2);
	await call(reviewerToken, 'POST', `/api/v1/relations/${relation}/versions/1/deprecate`, {
		reason: 'An invented zero-point error.',
		successor: 2
	});
	embargoed = await newRelation('Contract embargoed', group);
	await approve(embargoed, 1);
	await approve(embargoed, 2, new Date(Date.now() + 30 * 86_400_000).toISOString());
	privateRelation = await newRelation('Contract private', group, 'group');
	await approve(privateRelation, 1);
});

test.afterAll(async () => {
	await orm?.close(true);
});

const bearer = (token: string) => ({ headers: { authorization: `Bearer ${token}` } });

/** The digest rule, computed here without the app's code: drop `digest`, RFC 8785 canonical JSON, sha256. */
function digestByTheRule(body: Record<string, unknown>): string {
	const { digest: _digest, ...content } = body;
	return `sha256:${createHash('sha256').update(canonicalize(content)!, 'utf8').digest('hex')}`;
}

async function checked(request: APIRequestContext, operation: string, path: string, token?: string) {
	const response = await request.get(path, token ? bearer(token) : {});
	await expectMatchesOpenApi(request, response, operation);
	return response;
}

test('every read route answers as the OpenAPI document describes', async ({ request }) => {
	// Anonymous callers see two of the three relations (the third is group-private): two pages of one.
	const list = await checked(request, 'GET /api/v1/relations', `/api/v1/relations?q=${TOKEN}&sort=-updated&limit=1`);
	expect(list.status()).toBe(200);
	expect(list.headers()['vary']).toBe('Authorization, Cookie');
	expect(list.headers()['cache-control']).toContain('private');
	const page = await list.json();
	expect(page.items).toHaveLength(1);
	const next = await checked(
		request,
		'GET /api/v1/relations',
		`/api/v1/relations?q=${TOKEN}&sort=-updated&limit=1&cursor=${page.next_cursor}`
	);
	const second = await next.json();
	expect(second.next_cursor).toBeNull();
	expect([page.items[0].slug, second.items[0].slug].sort()).toEqual([relation, embargoed].sort());
	for (const bad of ['sort=sideways', 'limit=500', 'band=Q', 'cursor=nonsense', 'state=sleeping']) {
		const refused = await checked(request, 'GET /api/v1/relations', `/api/v1/relations?${bad}`);
		expect(refused.status()).toBe(422);
		expect((await refused.json()).errors[0].path).toBe(bad.split('=')[0]);
	}

	const detail = await checked(request, 'GET /api/v1/relations/{slug}', `/api/v1/relations/${relation}`);
	expect(detail.status()).toBe(200);
	const body = await detail.json();
	expect(body.description_html).toContain('<strong>Markdown</strong>');
	expect(body.description_html).not.toContain('<script');

	expect((await checked(request, 'GET /api/v1/bands', '/api/v1/bands')).status()).toBe(200);
	expect(
		(
			await checked(request, 'GET /api/v1/relations/{slug}/versions/{n}', `/api/v1/relations/${relation}/versions/2`)
		).status()
	).toBe(200);
	const latest = await checked(request, 'GET /api/v1/relations/{slug}/latest', `/api/v1/relations/${relation}/latest`);
	expect(latest.status()).toBe(200);
	expect(latest.headers()['cache-control']).toBe('public, max-age=60');
	expect(latest.headers()['vary']).toBe('Authorization, Cookie');
	expect(latest.headers()['content-location']).toBe(`/api/v1/pins/${relation}@2`);
	expect(latest.headers()['link']).toBe(`<${origin}/api/v1/pins/${relation}@2>; rel="canonical"`);
	const pinned = await latest.json();
	expect((await checked(request, 'GET /api/v1/pins/{ref}', `/api/v1/pins/${relation}@2`)).status()).toBe(200);

	const digest = await checked(request, 'GET /api/v1/digests/{digest}', `/api/v1/digests/${pinned.digest}`);
	expect(await digest.json()).toEqual({
		kind: 'relation_version',
		ref: `${relation}@2`,
		href: `/api/v1/pins/${relation}@2`,
		digest: pinned.digest
	});
	const revisionDigest = pinned.calibrator_set.digest;
	const revision = await checked(request, 'GET /api/v1/digests/{digest}', `/api/v1/digests/${revisionDigest}`);
	expect(await revision.json()).toMatchObject({ kind: 'calibrator_revision', ref: `${setSlug}@2` });
	expect((await checked(request, 'GET /api/v1/digests/{digest}', '/api/v1/digests/sha1:abc')).status()).toBe(422);

	const diff = await checked(
		request,
		'GET /api/v1/relations/{slug}/diff',
		`/api/v1/relations/${relation}/diff?from=1&to=2`
	);
	expect((await diff.json()).from.ref).toBe(`${relation}@1`);
	expect(
		(
			await checked(request, 'GET /api/v1/relations/{slug}/diff', `/api/v1/relations/${relation}/diff?from=x&to=2`)
		).status()
	).toBe(422);

	const stars = await checked(request, 'GET /api/v1/stars', '/api/v1/stars?q=6003');
	const hits = (await stars.json()).items.filter((item: { calibrator_set: string }) => item.calibrator_set === setSlug);
	expect(hits.map((hit: { revision: number }) => hit.revision)).toEqual([1, 2]);
	expect(hits[1].relation_versions.map((v: { ref: string }) => v.ref)).toContain(`${relation}@2`);
	expect((await checked(request, 'GET /api/v1/stars', '/api/v1/stars')).status()).toBe(422);

	const reproduce = await request.post(`/api/v1/relations/${relation}/versions/2/reproduce`);
	await expectMatchesOpenApi(request, reproduce, 'POST /api/v1/relations/{slug}/versions/{n}/reproduce');
	expect(await reproduce.json()).toMatchObject({
		digest_matches: true,
		digest: pinned.digest,
		recomputed_digest: pinned.digest,
		max_relative_difference: 0,
		differences: []
	});

	const styles = {
		text: 'text/plain',
		bibtex: 'application/x-bibtex',
		'csl-json': 'application/vnd.citationstyles.csl+json',
		datacite: 'application/vnd.datacite.datacite+json'
	};
	for (const [style, mediaType] of Object.entries(styles)) {
		const citation = await checked(
			request,
			'GET /api/v1/relations/{slug}/versions/{n}/citation',
			`/api/v1/relations/${relation}/versions/2/citation?style=${style}`
		);
		expect(citation.status()).toBe(200);
		expect(citation.headers()['content-type']).toBe(`${mediaType}; charset=utf-8`);
		expect(await citation.text()).toContain(pinned.digest);
	}
	expect(
		(
			await checked(
				request,
				'GET /api/v1/relations/{slug}/versions/{n}/citation',
				`/api/v1/relations/${relation}/versions/2/citation?style=apa`
			)
		).status()
	).toBe(422);
});

test('pinned bytes: identical on every fetch, the digest recomputes by the rule, 304 on the ETag', async ({
	request
}) => {
	const paths = [
		`/api/v1/relations/${relation}/latest`,
		`/api/v1/relations/${relation}/latest`,
		`/api/v1/pins/${relation}@2`,
		`/api/v1/relations/${relation}/versions/2`
	];
	const bodies = await Promise.all(paths.map(async (path) => (await request.get(path)).body()));
	for (const body of bodies) expect(body.equals(bodies[0])).toBe(true);
	const content = JSON.parse(bodies[0].toString('utf8')) as Record<string, unknown>;
	expect(digestByTheRule(content)).toBe(content.digest);
	expect(bodies[0].toString('utf8')).toBe(canonicalize(content));

	for (const [path, operation] of [
		[`/api/v1/relations/${relation}/latest`, 'GET /api/v1/relations/{slug}/latest'],
		[`/api/v1/pins/${relation}@2`, 'GET /api/v1/pins/{ref}'],
		[`/api/v1/relations/${relation}/versions/2`, 'GET /api/v1/relations/{slug}/versions/{n}']
	]) {
		const again = await request.get(path, { headers: { 'if-none-match': `"${content.digest}"` } });
		expect(again.status()).toBe(304);
		await expectMatchesOpenApi(request, again, operation);
	}
});

test('a deprecated version still resolves, and the relation names its successor', async ({ request }) => {
	const old = await request.get(`/api/v1/pins/${relation}@1`);
	expect(old.status()).toBe(200);
	const content = await old.json();
	expect(digestByTheRule(content)).toBe(content.digest);
	const detail = await (await request.get(`/api/v1/relations/${relation}`)).json();
	expect(detail.state).toBe('active');
	expect(detail.current).toEqual({ version: 2, ref: `${relation}@2`, digest: expect.stringMatching(/^sha256:/) });
	expect(
		detail.versions.map((v: { version: number; lifecycle: string; successor: string | null }) => [
			v.version,
			v.lifecycle,
			v.successor
		])
	).toEqual([
		[1, 'deprecated', `${relation}@2`],
		[2, 'current', null]
	]);
	expect(detail.versions[0].deprecation_reason).toBe('An invented zero-point error.');
});

test('private relations and embargoed versions: 404 without the right token, visible with it', async ({ request }) => {
	const status = async (path: string, token?: string) => (await request.get(path, token ? bearer(token) : {})).status();
	const hiddenVersion = `/api/v1/relations/${embargoed}/versions/2`;
	const hiddenRelation = `/api/v1/relations/${privateRelation}`;
	for (const path of [hiddenVersion, `/api/v1/pins/${embargoed}@2`, hiddenRelation, `${hiddenRelation}/latest`]) {
		expect(await status(path), path).toBe(404);
		expect(await status(path, memberPlain), path).toBe(404);
		expect(await status(path, outsiderPrivate), path).toBe(404);
		const visible = await request.get(path, bearer(memberPrivate));
		expect(visible.status(), path).toBe(200);
		expect(visible.headers()['vary']).toBe('Authorization, Cookie');
		expect(visible.headers()['cache-control']).toContain('private');
	}
	const notFound = await request.get(hiddenVersion);
	await expectMatchesOpenApi(request, notFound, 'GET /api/v1/relations/{slug}/versions/{n}');
	expect(notFound.headers()['content-type']).toContain('application/problem+json');

	const publicView = await (await request.get(`/api/v1/relations/${embargoed}`)).json();
	expect(publicView.versions.map((v: { version: number }) => v.version)).toEqual([1]);
	expect(publicView.current.version).toBe(1);
	const memberView = await (await request.get(`/api/v1/relations/${embargoed}`, bearer(memberPrivate))).json();
	expect(memberView.versions.map((v: { version: number; embargoed: boolean }) => [v.version, v.embargoed])).toEqual([
		[1, false],
		[2, true]
	]);
	const embargoedDigest = memberView.versions[1].digest;
	expect(await status(`/api/v1/digests/${embargoedDigest}`)).toBe(404);
	expect(await status(`/api/v1/digests/${embargoedDigest}`, memberPrivate)).toBe(200);
	expect((await request.post(`/api/v1/relations/${embargoed}/versions/2/reproduce`)).status()).toBe(404);

	const listed = async (token?: string) =>
		(await (await request.get(`/api/v1/relations?q=${TOKEN}`, token ? bearer(token) : {})).json()).items.map(
			(item: { slug: string }) => item.slug
		);
	expect(await listed()).not.toContain(privateRelation);
	expect(await listed(memberPlain)).not.toContain(privateRelation);
	expect(await listed(memberPrivate)).toContain(privateRelation);
});

test('the feed is Atom XML, and the BibTeX citation parses', async ({ page, request }) => {
	const feed = await request.get(`/relations/${relation}/feed.atom`);
	expect(feed.status()).toBe(200);
	expect(feed.headers()['content-type']).toBe('application/atom+xml; charset=utf-8');
	const xml = await feed.text();
	// Chromium's own XML parser reads the feed (RFC 4287 namespace, entries, ids, updated, links).
	const parsed = await page.evaluate((text) => {
		const doc = new DOMParser().parseFromString(text, 'application/xml');
		const atom = 'http://www.w3.org/2005/Atom';
		const entries = [...doc.getElementsByTagNameNS(atom, 'entry')];
		return {
			error: doc.getElementsByTagName('parsererror').length > 0,
			root: `${doc.documentElement.namespaceURI} ${doc.documentElement.localName}`,
			titles: entries.map((entry) => entry.getElementsByTagNameNS(atom, 'title')[0]?.textContent),
			complete: entries.every((entry) =>
				['id', 'updated', 'link', 'summary'].every((name) => entry.getElementsByTagNameNS(atom, name).length === 1)
			)
		};
	}, xml);
	expect(parsed.error).toBe(false);
	expect(parsed.root).toBe('http://www.w3.org/2005/Atom feed');
	expect(parsed.titles.sort()).toEqual(
		[`Deprecated: ${relation}@1`, `New version: ${relation}@1`, `New version: ${relation}@2`].sort()
	);
	expect(parsed.complete).toBe(true);
	expect((await request.get(`/relations/${privateRelation}/feed.atom`)).status()).toBe(404);

	const bibtex = await (await request.get(`/api/v1/relations/${relation}/versions/2/citation?style=bibtex`)).text();
	// @citation-js/plugin-bibtex 0.7.9, an independent BibTeX parser, reads the entry back.
	const [entry] = new Cite(bibtex).data as Record<string, unknown>[];
	expect(entry.title).toBe(`Contract superseded ${TOKEN}`);
	expect(entry.version).toBe('2');
	expect(String(entry.note)).toContain(ORCID);
	const datacite = await (await request.get(`/api/v1/relations/${relation}/versions/2/citation?style=datacite`)).json();
	expect(JSON.stringify(datacite.contributors)).toContain(`https://orcid.org/${ORCID}`);
	expect(datacite.relatedItems[0].titles[0].title).toBe('Invented Survey Team (2026), Invented Journal 1, 1');
});
