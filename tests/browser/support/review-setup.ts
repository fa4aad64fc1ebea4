import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, type Browser, type BrowserContext } from '@playwright/test';
import { syntheticCalibrators } from '../../../src/lib/calibration/index';
import type { GroupStanding, Role } from '../../../src/lib/server/entities/index';
import { createBearerToken, createGroupRow, createPerson, createSessionCookie, uniqueSlug } from './accounts';

/**
 * Review-desk set-up over the registry API (bearer tokens) against the running build: people,
 * calibrator sets with invented host Cepheids, relations, fits and proposals.
 */
export const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;

export interface Person {
	id: string;
	email: string;
	displayName: string;
	token: string;
}

export async function reviewPerson(
	orm: MikroORM,
	label: string,
	roles: Role[],
	group: string,
	standing: GroupStanding = 'member'
): Promise<Person> {
	const user = await createPerson(orm, { label, roles: ['reader', ...roles], groups: [{ group, standing }] });
	const token = await createBearerToken(orm, user.id, ['write', 'review', 'read:private']);
	return { id: user.id, email: user.email, displayName: user.displayName, token };
}

export interface ReviewDesk {
	group: string;
	/** A curator, who proposes. */
	author: Person;
	reviewer: Person;
	/** A calibrator set of the author's with two revisions (see `hostCsv`). */
	set: string;
}

/** A group of its own with an author, a reviewer and the author's calibrator set. */
export async function reviewDesk(orm: MikroORM, label: string): Promise<ReviewDesk> {
	const group = await createGroupRow(orm, uniqueSlug(label));
	const author = await reviewPerson(orm, `${label} author`, ['curator'], group);
	const reviewer = await reviewPerson(orm, `${label} reviewer`, ['reviewer'], group);
	return { group, author, reviewer, set: await calibratorSet(author, group) };
}

/** A browser context signed in as the person (a session cookie made directly in the database). */
export async function signedInContext(
	browser: Browser,
	orm: MikroORM,
	person: { id: string },
	options: { javaScriptEnabled?: boolean } = {}
): Promise<BrowserContext> {
	const context = await browser.newContext({ javaScriptEnabled: options.javaScriptEnabled ?? true });
	await context.addCookies([
		{
			name: 'candlebook_session',
			value: await createSessionCookie(orm, person.id),
			url: origin,
			httpOnly: true,
			sameSite: 'Lax'
		}
	]);
	return context;
}

export async function api(
	token: string,
	method: string,
	path: string,
	body?: unknown,
	contentType = 'application/json'
) {
	const response = await fetch(`${origin}${path}`, {
		method,
		headers: { authorization: `Bearer ${token}`, ...(body === undefined ? {} : { 'content-type': contentType }) },
		body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body)
	});
	const text = await response.text();
	return { status: response.status, body: text ? JSON.parse(text) : null };
}

/**
 * Invented host Cepheids at μ = 18.5 from a known W_VI relation. `variant` 2 drops two stars, adds two
 * and brightens one by 0.05 mag, so the review shows calibrators added, removed and changed.
 */
export function hostCsv(variant: 1 | 2 = 1): string {
	const points = syntheticCalibrators(
		{ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 },
		{ count: 42, seed: 11 }
	);
	const rows = points.map((p, i) => ({
		star: `Invented ${p.star}`,
		crossId: 8000 + i,
		period: 10 ** p.logPeriod,
		mag: p.absMag + 18.5,
		err: p.absMagErr
	}));
	const chosen = variant === 1 ? rows.slice(0, 40) : [...rows.slice(2, 42)];
	if (variant === 2) chosen[5] = { ...chosen[5], mag: chosen[5].mag - 0.05 };
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		...chosen.map(
			(r) =>
				`${r.star},${r.crossId},classical_fundamental,${r.period.toFixed(6)},${r.mag.toFixed(4)},${r.err.toFixed(4)},18.5,0.03`
		)
	].join('\n');
}

/** The fit the review tests propose: W_VI of host Cepheids, maximum-likelihood scatter, 3σ clipping. */
export const HOST_FIT = {
	band: 'W_VI',
	population: 'classical_fundamental',
	anchor: 'host',
	method: 'ml_scatter',
	clipping: { sigma: 3, max_iterations: 5 }
};

export async function calibratorSet(author: Person, group: string): Promise<string> {
	const slug = uniqueSlug('review-set');
	const created = await api(author.token, 'POST', '/api/v1/calibrator-sets', {
		slug,
		title: 'Invented host Cepheids for review',
		group,
		licence: 'CC0-1.0',
		citations: ['Invented 2026']
	});
	expect(created.status).toBe(201);
	for (const variant of [1, 2] as const) {
		const uploaded = await api(
			author.token,
			'POST',
			`/api/v1/calibrator-sets/${slug}/revisions`,
			hostCsv(variant),
			'text/csv'
		);
		expect(uploaded.status).toBe(201);
	}
	return slug;
}

export async function relation(author: Person, group: string): Promise<string> {
	const slug = uniqueSlug('review-w-vi');
	const created = await api(author.token, 'POST', '/api/v1/relations', {
		slug,
		title: 'Invented W_VI relation under review',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group,
		required_approvals: 1
	});
	expect(created.status).toBe(201);
	return slug;
}

/**
 * A fit of one revision of the set, proposed (and submitted) as the relation's next version; with
 * `embargoUntil` the version it becomes stays hidden from outside the group until then.
 */
export async function proposal(
	author: Person,
	options: {
		set: string;
		revision: 1 | 2;
		relation: string;
		title: string;
		rationale?: string;
		submit?: boolean;
		embargoUntil?: Date;
	}
): Promise<string> {
	const fit = await api(author.token, 'POST', '/api/v1/fits', {
		calibrator_set: options.set,
		revision: options.revision,
		...HOST_FIT
	});
	expect(fit.status).toBe(200);
	const proposed = await api(author.token, 'POST', `/api/v1/relations/${options.relation}/proposals`, {
		fit: fit.body.id,
		title: options.title,
		rationale: options.rationale ?? '',
		submit: options.submit ?? true,
		...(options.embargoUntil ? { embargo_until: options.embargoUntil.toISOString() } : {})
	});
	expect(proposed.status).toBe(201);
	return proposed.body.id as string;
}

export async function approveOverApi(reviewer: Person, proposalId: string) {
	const approved = await api(reviewer.token, 'POST', `/api/v1/proposals/${proposalId}/reviews`, {
		decision: 'approve'
	});
	expect(approved.status).toBe(201);
	return approved.body;
}

/** The author revises the rationale and submits again, as a pipeline would over the API. */
export async function resubmit(author: Person, proposalId: string, rationale: string) {
	expect((await api(author.token, 'PATCH', `/api/v1/proposals/${proposalId}`, { rationale })).status).toBe(200);
	const submitted = await api(author.token, 'POST', `/api/v1/proposals/${proposalId}/submit`);
	expect(submitted.body.state).toBe('in_review');
}
