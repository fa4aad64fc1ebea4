import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type Browser } from '@playwright/test';
import { createBearerToken, createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';
import {
	api,
	approveOverApi,
	hostCsv,
	origin,
	proposal,
	relation,
	reviewDesk,
	reviewPerson,
	signedInContext,
	type ReviewDesk
} from './support/review-setup';

/**
 * What a reader may not see stays unseen, over HTTP against the built app: an approved proposal whose
 * version is under embargo, its review page (which plots per-star points), its refit page and its fit
 * job are its group's alone; a group-private set cannot back a public relation; and a token without
 * read:private answers like an anonymous caller on the public reads and filters the signed-in ones.
 */
let orm: MikroORM;
let desk: ReviewDesk;
let embargoed: {
	relation: string;
	proposal: string;
	title: string;
	fit: string;
	zeroPoint: number;
	digest: string;
};
let privateRelation: string;
let privateSet: string;
let hiddenStar: string;
const started = Date.now();
const PRIVATE_RELATION_TITLE = 'Invented private W_VI relation, kept in its group';

interface Caller {
	id: string;
	/** A bearer token (read:private unless the caller is a scope-less token). */
	token: string;
	/** May sign in to pages with a session (tokens never reach pages). */
	session: boolean;
	roles: string[];
}
let outside: Record<string, Caller>;
let inside: Record<string, Caller>;

async function caller(
	label: string,
	roles: string[],
	groups: { group: string; standing: 'member' | 'manager' }[],
	scopes: ('read:private' | 'write' | 'review')[] = ['read:private'],
	session = true
): Promise<Caller> {
	const person = await createPerson(orm, { label, roles: ['reader', ...roles] as never, groups });
	return { id: person.id, token: await createBearerToken(orm, person.id, scopes), session, roles };
}

test.beforeAll(async () => {
	test.setTimeout(120_000);
	orm = await openOrm();
	desk = await reviewDesk(orm, 'vis');
	const elsewhere = await createGroupRow(orm, uniqueSlug('vis-elsewhere'));
	const g = [{ group: desk.group, standing: 'member' as const }];
	outside = {
		'signed-in reader outside the group': await caller('vis outside reader', [], []),
		'curator outside the group': await caller('vis outside curator', ['curator'], []),
		'reviewer outside the group': await caller('vis outside reviewer', ['reviewer'], []),
		'token with read:private of another group': await caller(
			'vis other group',
			['curator'],
			[{ group: elsewhere, standing: 'member' }]
		),
		'member token without scopes': await caller('vis scopeless member', ['curator'], g, [], false),
		'admin token without scopes': await caller('vis scopeless admin', ['admin'], [], [], false)
	};
	inside = {
		'group member': await caller('vis member', [], g),
		'group curator': await caller('vis group curator', ['curator'], g),
		'eligible reviewer': await caller('vis eligible reviewer', ['reviewer'], g),
		admin: await caller('vis admin', ['admin'], [])
	};

	// A public relation whose first version is approved under embargo.
	const slug = await relation(desk.author, desk.group);
	const title = uniqueSlug('Embargoed overtone refit');
	const id = await proposal(desk.author, {
		set: desk.set,
		revision: 1,
		relation: slug,
		title,
		rationale: 'Invented: kept inside the group until the paper is out.',
		embargoUntil: new Date(Date.now() + 365 * 86_400_000)
	});
	const approval = await approveOverApi(desk.reviewer, id);
	const read = await api(desk.author.token, 'GET', `/api/v1/proposals/${id}`);
	expect(read.status).toBe(200);
	embargoed = {
		relation: slug,
		proposal: id,
		title,
		fit: read.body.fit,
		zeroPoint: read.body.proposed.coefficients.zero_point,
		digest: approval.frozen_version.digest
	};

	// A group-private set with star names of its own, and a group-private relation.
	privateSet = uniqueSlug('vis-private-set');
	expect(
		(
			await api(desk.author.token, 'POST', '/api/v1/calibrator-sets', {
				slug: privateSet,
				title: 'Invented private host Cepheids',
				group: desk.group,
				licence: 'CC0-1.0',
				citations: [],
				visibility: 'group'
			})
		).status
	).toBe(201);
	const hidden = hostCsv(1).replaceAll('Invented ', 'Concealed ');
	hiddenStar = hidden.split('\n')[1].split(',')[0];
	const uploaded = await api(
		desk.author.token,
		'POST',
		`/api/v1/calibrator-sets/${privateSet}/revisions`,
		hidden,
		'text/csv'
	);
	expect(uploaded.status).toBe(201);
	const created = await api(desk.author.token, 'POST', '/api/v1/relations', {
		slug: uniqueSlug('vis-private-relation'),
		title: PRIVATE_RELATION_TITLE,
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group: desk.group,
		visibility: 'group',
		required_approvals: 1
	});
	expect(created.status).toBe(201);
	privateRelation = created.body.slug;
});

test.afterAll(async () => {
	await orm?.close(true);
	console.log(`proposal-visibility browser test: ${Date.now() - started} ms`);
});

async function anonymous(path: string) {
	const response = await fetch(`${origin}${path}`, { redirect: 'manual' });
	return { status: response.status, text: await response.text() };
}

async function withToken(token: string, path: string) {
	const response = await fetch(`${origin}${path}`, { headers: { authorization: `Bearer ${token}` } });
	return { status: response.status, text: await response.text() };
}

/**
 * The canaries of the embargoed proposal: its title and its zero point at the precisions shown (its id
 * is not one: a 404 names the id the caller asked for).
 */
function leaks(text: string): string[] {
	const zp = embargoed.zeroPoint;
	const canaries = [embargoed.title, zp.toFixed(4), String(zp)];
	return canaries.filter((canary) => text.includes(canary));
}

async function pageStatus(browser: Browser, who: Caller, path: string) {
	const context = await signedInContext(browser, orm, who);
	const page = await context.newPage();
	const response = await page.goto(path);
	const status = response?.status() ?? 0;
	const text = await page.content();
	await context.close();
	return { status, text };
}

test('an approved proposal under embargo: 404 and unlisted for every caller outside the group, shown inside it', async ({
	browser
}) => {
	test.setTimeout(120_000);
	const { proposal: id, relation: slug, fit } = embargoed;
	// Anonymous: the signed-in routes refuse, the pin is 404, the page sends to sign-in; nothing leaks.
	for (const path of [
		'/api/v1/proposals?state=approved',
		`/api/v1/proposals/${id}`,
		`/api/v1/jobs/${fit}`,
		`/api/v1/pins/${slug}@1`,
		`/review/${id}`
	]) {
		const answer = await anonymous(path);
		expect([401, 303, 404], path).toContain(answer.status);
		expect(leaks(answer.text), path).toEqual([]);
	}

	for (const [who, c] of Object.entries(outside)) {
		const list = await withToken(c.token, '/api/v1/proposals?state=approved');
		expect(list.status, who).toBe(200);
		expect(leaks(list.text), who).toEqual([]);
		expect(list.text, who).not.toContain(id);
		for (const path of [`/api/v1/proposals/${id}`, `/api/v1/jobs/${fit}`, `/api/v1/pins/${slug}@1`]) {
			const answer = await withToken(c.token, path);
			expect(answer.status, `${who} ${path}`).toBe(404);
			expect(leaks(answer.text), `${who} ${path}`).toEqual([]);
		}
		if (!c.session) continue;
		const review = await pageStatus(browser, c, `/review/${id}`);
		expect(review.status, `${who} /review`).toBe(404);
		expect(leaks(review.text), `${who} /review`).toEqual([]);
		const queue = await pageStatus(browser, c, '/review?view=all');
		expect(leaks(queue.text), `${who} /review?view=all`).toEqual([]);
		if (c.roles.includes('curator')) {
			const refit = await pageStatus(browser, c, `/relations/${slug}/refit?proposal=${id}`);
			expect(refit.status, `${who} refit`).toBe(404);
			expect(leaks(refit.text), `${who} refit`).toEqual([]);
		}
	}

	for (const [who, c] of Object.entries(inside)) {
		const list = await withToken(c.token, '/api/v1/proposals?state=approved');
		expect(list.text, who).toContain(id);
		const read = await withToken(c.token, `/api/v1/proposals/${id}`);
		expect(read.status, who).toBe(200);
		expect(JSON.parse(read.text).proposed.coefficients.zero_point, who).toBe(embargoed.zeroPoint);
		expect((await withToken(c.token, `/api/v1/pins/${slug}@1`)).status, who).toBe(200);
		const review = await pageStatus(browser, c, `/review/${id}`);
		expect(review.status, `${who} /review`).toBe(200);
		expect(review.text, `${who} /review`).toContain(embargoed.title);
	}
	// The review page plots the per-star points for the eligible reviewer.
	const context = await signedInContext(browser, orm, inside['eligible reviewer']);
	const page = await context.newPage();
	await page.goto(`/review/${id}`);
	await expect(page.getByRole('heading', { name: embargoed.title })).toBeVisible();
	await context.close();
	// The fit job and the refit page: the author, a curator of the group, and an admin.
	expect((await withToken(desk.author.token, `/api/v1/jobs/${fit}`)).status).toBe(200);
	expect((await withToken(inside.admin.token, `/api/v1/jobs/${fit}`)).status).toBe(200);
	const refit = await pageStatus(browser, inside['group curator'], `/relations/${slug}/refit?proposal=${id}`);
	expect(refit.status).toBe(200);
	expect(refit.text).toContain(embargoed.title);
});

/** A fit of the group-private set, as someone who may see it. */
const fitPrivateSet = (token: string) =>
	api(token, 'POST', '/api/v1/fits', {
		calibrator_set: privateSet,
		revision: 1,
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor: 'host',
		method: 'ml_scatter'
	});

test('a fit of a group-private set cannot be proposed for a public relation: 422 problem+json naming fit', async () => {
	const slug = await relation(desk.author, desk.group);
	const fit = await fitPrivateSet(desk.author.token);
	expect(fit.status).toBe(200);
	const response = await fetch(`${origin}/api/v1/relations/${slug}/proposals`, {
		method: 'POST',
		headers: { authorization: `Bearer ${desk.author.token}`, 'content-type': 'application/json' },
		body: JSON.stringify({ fit: fit.body.id, title: 'Private rows in public', rationale: '', submit: false })
	});
	expect(response.status).toBe(422);
	expect(response.headers.get('content-type')).toContain('application/problem+json');
	const problem = await response.json();
	expect(problem.detail).toContain(privateSet);
	expect(problem.errors).toEqual([{ path: 'fit', message: expect.stringContaining('group-private calibrator set') }]);
});

test('a token without read:private answers like an anonymous caller; signed-in routes are filtered', async () => {
	const member = outside['member token without scopes'];
	const scopelessAdmin = outside['admin token without scopes'];
	// Public reads: byte for byte what an anonymous caller gets.
	for (const path of [
		'/api/v1/relations',
		`/api/v1/relations/${privateRelation}`,
		`/api/v1/relations/${embargoed.relation}`,
		`/api/v1/relations/${embargoed.relation}/latest`,
		`/api/v1/pins/${embargoed.relation}@1`,
		'/api/v1/calibrator-sets?limit=200',
		`/api/v1/digests/${embargoed.digest}`,
		`/api/v1/calibrator-sets/${privateSet}`,
		`/api/v1/calibrator-sets/${privateSet}/revisions/1`,
		`/api/v1/stars?q=${encodeURIComponent(hiddenStar)}`
	]) {
		const base = await anonymous(path);
		for (const token of [member.token, scopelessAdmin.token]) {
			const answer = await withToken(token, path);
			expect(answer.status, path).toBe(base.status);
			expect(answer.text, path).toBe(base.text);
			expect(answer.text, path).not.toContain(PRIVATE_RELATION_TITLE);
		}
	}
	// …and the anonymous answers compared with hide the private set, relation and version.
	const stars = await anonymous(`/api/v1/stars?q=${encodeURIComponent(hiddenStar)}`);
	expect(JSON.parse(stars.text).items).toEqual([]);
	for (const path of [
		`/api/v1/relations/${privateRelation}`,
		`/api/v1/calibrator-sets/${privateSet}`,
		`/api/v1/pins/${embargoed.relation}@1`,
		`/api/v1/digests/${embargoed.digest}`
	]) {
		expect((await anonymous(path)).status, path).toBe(404);
	}
	// With read:private the same member sees the private set and star: the comparison above is not empty.
	const withScope = await reviewPerson(orm, 'vis scoped member', ['curator'], desk.group);
	expect((await withToken(withScope.token, `/api/v1/stars?q=${encodeURIComponent(hiddenStar)}`)).text).toContain(
		hiddenStar
	);
	expect((await withToken(withScope.token, `/api/v1/relations/${privateRelation}`)).status).toBe(200);

	// Signed-in routes still answer a scope-less token, filtered: no private proposal or fit of a private set.
	const list = await withToken(member.token, '/api/v1/proposals');
	expect(list.status).toBe(200);
	expect(leaks(list.text)).toEqual([]);
	expect(list.text).not.toContain(embargoed.proposal);
	const privateFit = await fitPrivateSet(withScope.token);
	expect(privateFit.status).toBe(200);
	expect((await withToken(withScope.token, `/api/v1/jobs/${privateFit.body.id}`)).status).toBe(200);
	const ownWithoutScope = await createBearerToken(orm, withScope.id, ['write']);
	const hiddenJob = await withToken(ownWithoutScope, `/api/v1/jobs/${privateFit.body.id}`);
	expect(hiddenJob.status).toBe(404);
	expect(hiddenJob.text).not.toContain(hiddenStar);
	const me = await withToken(member.token, '/api/v1/me');
	expect(me.status).toBe(200);
});
