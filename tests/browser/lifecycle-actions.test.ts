import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type Browser, type Page } from '@playwright/test';
import { createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';
import { approve, authorStep } from './support/review-flow';
import {
	api,
	approveOverApi,
	origin,
	proposal,
	relation,
	reviewDesk,
	reviewPerson,
	signedInContext,
	type Person,
	type ReviewDesk
} from './support/review-setup';

/**
 * Steps that change a version's or a proposal's standing, taken by clicking as the person allowed to:
 * a group manager ends an embargo early; an author submits, withdraws and rebases a proposal.
 */
let orm: MikroORM;
let desk: ReviewDesk & {
	manager: Person;
	/** A member of the group who neither reviews nor wrote anything here. */
	reader: Person;
	/** Signed in, but in no group: sees what the public sees. */
	outsider: Person;
};

test.beforeAll(async () => {
	orm = await openOrm();
	const { group, ...people } = await reviewDesk(orm, 'lifecycle');
	desk = {
		group,
		...people,
		manager: await reviewPerson(orm, 'lifecycle manager', [], group, 'manager'),
		reader: await reviewPerson(orm, 'lifecycle reader', [], group),
		outsider: await reviewPerson(orm, 'lifecycle outsider', [], await createGroupRow(orm, uniqueSlug('elsewhere')))
	};
});

test.afterAll(async () => {
	await orm?.close(true);
});

/** A page signed in as the person, in a context of its own (closed with `page.context().close()`). */
async function pageAs(browser: Browser, person: { id: string }, options: { javaScriptEnabled?: boolean } = {}) {
	return (await signedInContext(browser, orm, person, options)).newPage();
}

/** The desk author's proposal, for the relation, of a fit of revision 1 or 2 of the desk's set. */
function propose(
	slug: string,
	revision: 1 | 2,
	title: string,
	options: { submit?: boolean; embargoUntil?: Date } = {}
) {
	return proposal(desk.author, { set: desk.set, revision, relation: slug, title, ...options });
}

/** A read with no credentials at all, as a pipeline outside the group makes it. */
async function anonymousRead(path: string) {
	const response = await fetch(`${origin}${path}`);
	const text = await response.text();
	return { status: response.status, etag: response.headers.get('etag'), body: text ? JSON.parse(text) : null };
}

/** The proposal as the API shows it to the person. */
async function proposalState(person: Person, id: string) {
	const read = await api(person.token, 'GET', `/api/v1/proposals/${id}`);
	expect(read.status).toBe(200);
	return read.body as { state: string; stale: boolean; base_version: number | null; current_version: number | null };
}

/** A form post as the browser would send it from the page, without the page offering the button. */
function forgedPost(page: Page, path: string) {
	return page.request.post(path, {
		form: {},
		headers: { origin, accept: 'text/html' },
		maxRedirects: 0
	});
}

/** The versions an anonymous visitor of the relation's page is shown, newest first. */
async function publicTimeline(browser: Browser, slug: string, shown: string) {
	const context = await browser.newContext();
	const page = await context.newPage();
	await page.goto(`/relations/${slug}`);
	await expect(page.getByText(shown)).toBeVisible();
	const versions = await page.getByTestId('version-timeline').getByRole('link').allInnerTexts();
	await context.close();
	return versions;
}

/** The manager's click on the lifecycle page, and what the page says once the version is public. */
async function releaseOnPage(page: Page, slug: string, number: number) {
	await page.goto(`/relations/${slug}/versions/${number}/lifecycle`);
	await expect(page.getByTestId('lifecycle')).toContainText('under embargo until');
	await page.getByRole('button', { name: `Release ${slug}@${number} now` }).click();
	await expect(page).toHaveURL(new RegExp(`/relations/${slug}/versions/${number}/lifecycle\\?done=released$`));
	await expect(page.getByText('The embargo is lifted: the version is public.')).toBeVisible();
	await expect(page.getByTestId('lifecycle')).toContainText(`released early`);
	await expect(page.getByTestId('lifecycle')).toContainText(`by ${desk.manager.displayName}`);
	await expect(page.getByRole('button', { name: /^Release/ })).toHaveCount(0);
	await expect(page.getByTestId('lifecycle-unavailable')).toContainText('Release: This version is not under embargo.');
}

test('a group manager releases embargoed versions early, with and without JavaScript', async ({ browser }) => {
	test.setTimeout(90_000);
	const slug = await relation(desk.author, desk.group);
	const embargoUntil = new Date(Date.now() + 30 * 86_400_000);
	const frozen = [];
	for (const revision of [1, 2] as const) {
		const id = await propose(slug, revision, `Embargoed ${slug} ${revision}`, { embargoUntil });
		frozen.push((await approveOverApi(desk.reviewer, id)).frozen_version as { version: number; digest: string });
	}
	expect(frozen.map((version) => version.version)).toEqual([1, 2]);

	// Outside the group neither version exists yet.
	for (const number of [1, 2]) {
		expect((await anonymousRead(`/api/v1/relations/${slug}/versions/${number}`)).status).toBe(404);
	}
	expect(await publicTimeline(browser, slug, 'No approved version yet')).toEqual([]);

	// A member who is not a manager sees why there is no button, and a post anyway is refused.
	const memberPage = await pageAs(browser, desk.reviewer);
	await memberPage.goto(`/relations/${slug}/versions/1/lifecycle`);
	await expect(memberPage.getByTestId('lifecycle')).toContainText('under embargo until');
	await expect(memberPage.getByRole('button', { name: /^Release/ })).toHaveCount(0);
	await expect(memberPage.getByTestId('lifecycle-unavailable')).toContainText(
		`Release: Only managers of ${desk.group} (and admins) release its embargoed versions.`
	);
	const refused = await forgedPost(memberPage, `/relations/${slug}/versions/1/lifecycle?/release`);
	expect(refused.status()).toBe(403);
	expect(await refused.text()).toContain(`Only managers of ${desk.group} release its embargoed versions.`);
	expect((await anonymousRead(`/api/v1/relations/${slug}/versions/1`)).status).toBe(404);
	await memberPage.context().close();

	const scripted = await pageAs(browser, desk.manager);
	await releaseOnPage(scripted, slug, 1);
	await scripted.context().close();
	const first = await anonymousRead(`/api/v1/relations/${slug}/versions/1`);
	expect(first.status).toBe(200);
	expect(first.body.digest).toBe(frozen[0].digest);
	expect(first.etag).toBe(`"${frozen[0].digest}"`);
	expect((await anonymousRead(`/api/v1/relations/${slug}/versions/2`)).status).toBe(404);
	// Version 2 stays hidden, so for readers outside the group version 1 is current, not superseded.
	expect(await publicTimeline(browser, slug, `Current version: ${slug}@1`)).toEqual(['Version 1']);
	const outsiderPage = await pageAs(browser, desk.outsider);
	await outsiderPage.goto(`/relations/${slug}/versions/1/lifecycle`);
	await expect(outsiderPage.getByTestId('lifecycle-status')).toHaveText('current');
	await expect(outsiderPage.getByTestId('lifecycle-versions').getByRole('listitem')).toHaveText(['@1 current']);
	expect((await outsiderPage.goto(`/relations/${slug}/versions/2/lifecycle`))?.status()).toBe(404);
	// The same standing wherever the version is used: the worksheet offers @1, and distances call it current.
	await outsiderPage.goto('/worksheet');
	await expect(outsiderPage.locator(`#relation option[value="${slug}@1"]`)).toHaveCount(1);
	const distances = await fetch(`${origin}/api/v1/distances`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({
			relation: `${slug}@1`,
			stars: [{ id: 'invented-1', period_days: 10, mean_mag: 12.4, mean_mag_err: 0.05 }]
		})
	});
	const answered = await distances.json();
	expect(distances.status, JSON.stringify(answered)).toBe(200);
	expect(answered.relation.status).toBe('current');
	expect(answered.warnings.map((warning: { code: string }) => warning.code)).not.toContain('version_superseded');

	const plain = await pageAs(browser, desk.manager, { javaScriptEnabled: false });
	await releaseOnPage(plain, slug, 2);
	await plain.context().close();
	const second = await anonymousRead(`/api/v1/relations/${slug}/versions/2`);
	expect(second.status).toBe(200);
	expect(second.body.digest).toBe(frozen[1].digest);
	expect(await publicTimeline(browser, slug, `Current version: ${slug}@2`)).toEqual(['Version 2', 'Version 1']);
	await outsiderPage.goto(`/relations/${slug}/versions/1/lifecycle`);
	await expect(outsiderPage.getByTestId('lifecycle-status')).toHaveText('superseded');
	await outsiderPage.context().close();

	// Both releases are in the audit log, by the manager, with the embargo they ended.
	const auditPage = await pageAs(
		browser,
		await createPerson(orm, { label: 'lifecycle admin', roles: ['reader', 'admin'] })
	);
	await auditPage.goto(`/admin/audit?kind=version-released&subject=${encodeURIComponent(`${slug}@`)}`);
	await expect(auditPage.getByTestId('audit-count')).toContainText('2 events match');
	const rows = auditPage.getByTestId('audit-table').locator('tbody tr');
	for (const [index, ref] of [`${slug}@2`, `${slug}@1`].entries()) {
		const row = rows.nth(index);
		await expect(row).toContainText(ref);
		await expect(row).toContainText(desk.manager.displayName);
		await expect(row).toContainText(embargoUntil.toISOString());
	}
	await auditPage.context().close();
});

/** The page offers none of the buttons, and says why the person may not. */
async function refusedHere(page: Page, buttons: string[], reason: string) {
	for (const name of buttons) await expect(page.getByRole('button', { name, exact: true })).toHaveCount(0);
	await expect(page.getByTestId('why-unavailable')).toContainText(reason);
}

const AUTHOR_BUTTONS = ['Submit for review', 'Withdraw', 'Rebase on the current version'];

test('an author submits a draft and withdraws it; nobody else is offered either step', async ({ browser }) => {
	test.setTimeout(60_000);
	const slug = await relation(desk.author, desk.group);
	const id = await propose(slug, 1, `Draft ${slug}`, { submit: false });
	expect((await proposalState(desk.author, id)).state).toBe('draft');

	// A draft is its author's own: a reviewer cannot even open it.
	const reviewerPage = await pageAs(browser, desk.reviewer);
	expect((await reviewerPage.goto(`/review/${id}`))?.status()).toBe(404);

	const authorPage = await pageAs(browser, desk.author);
	await authorPage.goto(`/review/${id}`);
	await expect(authorPage.getByTestId('proposal-state')).toHaveText('draft');
	await authorStep(authorPage, { proposalId: id, step: 'submit' });
	await expect(authorPage.getByText('Submitted: reviewers have been told.')).toBeVisible();
	await refusedHere(authorPage, ['Submit for review'], 'Submit for review: The proposal is already in review.');
	expect((await proposalState(desk.reviewer, id)).state).toBe('in_review');

	// The reviewer may now decide, but gets none of the author's steps; a withdrawal anyway is refused.
	await reviewerPage.goto(`/review/${id}`);
	await expect(reviewerPage.getByTestId('proposal-state')).toHaveText('in review');
	await expect(reviewerPage.getByRole('button', { name: 'Approve', exact: true })).toBeVisible();
	for (const name of AUTHOR_BUTTONS) await expect(reviewerPage.getByRole('button', { name })).toHaveCount(0);
	const refused = await forgedPost(reviewerPage, `/review/${id}?/withdraw`);
	expect(refused.status()).toBe(403);
	expect(await refused.text()).toContain('Only the author can withdraw the proposal.');

	// A member who neither reviews nor wrote it is told who does what.
	const readerPage = await pageAs(browser, desk.reader);
	await readerPage.goto(`/review/${id}`);
	await refusedHere(readerPage, AUTHOR_BUTTONS, 'only the author submits, revises or withdraws one');
	await readerPage.context().close();
	expect((await proposalState(desk.author, id)).state).toBe('in_review');

	await authorStep(authorPage, { proposalId: id, step: 'withdraw' });
	await expect(authorPage.getByText('The proposal is withdrawn.')).toBeVisible();
	await refusedHere(authorPage, ['Withdraw'], 'Withdraw: The proposal is already withdrawn.');
	expect((await proposalState(desk.author, id)).state).toBe('withdrawn');
	await reviewerPage.goto(`/review/${id}`);
	await refusedHere(reviewerPage, ['Approve'], 'The proposal is already withdrawn.');
	await reviewerPage.context().close();
	await authorPage.context().close();
});

test('a proposal overtaken by a newer version is refused approval until its author rebases it', async ({ browser }) => {
	test.setTimeout(90_000);
	const slug = await relation(desk.author, desk.group);
	await approveOverApi(desk.reviewer, await propose(slug, 1, `First ${slug}`));
	const id = await propose(slug, 2, `Overtaken ${slug}`);

	const authorPage = await pageAs(browser, desk.author);
	await authorPage.goto(`/review/${id}`);
	await refusedHere(
		authorPage,
		['Rebase on the current version'],
		'Rebase on the current version: The proposal already compares against the current version.'
	);

	// The reviewer opens the proposal while it is current; another version is approved meanwhile.
	const reviewerPage = await pageAs(browser, desk.reviewer);
	await reviewerPage.goto(`/review/${id}`);
	await expect(reviewerPage.getByRole('button', { name: 'Approve', exact: true })).toBeVisible();
	const overtaking = await propose(slug, 1, `Overtaking ${slug}`);
	expect((await approveOverApi(desk.reviewer, overtaking)).frozen_version.version).toBe(2);

	const staleReason =
		'The proposal was compared with version 1, but the current version is 2; the author must rebase it.';
	await reviewerPage.getByRole('button', { name: 'Approve', exact: true }).click();
	await expect(reviewerPage.getByRole('alert')).toContainText(staleReason);
	await expect(reviewerPage.getByTestId('frozen-ref')).toHaveCount(0);
	expect(await proposalState(desk.reviewer, id)).toMatchObject({
		state: 'in_review',
		stale: true,
		base_version: 1,
		current_version: 2
	});

	await reviewerPage.goto(`/review/${id}`);
	await expect(reviewerPage.getByText('It cannot be approved until its author rebases it')).toBeVisible();
	await refusedHere(reviewerPage, ['Approve', 'Rebase on the current version'], `Approve: ${staleReason}`);

	await authorPage.goto(`/review/${id}`);
	await expect(authorPage.getByText('It cannot be approved until you rebase it')).toBeVisible();
	await authorStep(authorPage, { proposalId: id, step: 'rebase' });
	await expect(
		authorPage.getByText('The proposal now compares with the current version; reviewers must look again.')
	).toBeVisible();
	await expect(authorPage.getByText(`compared with ${slug}@2`)).toBeVisible();
	expect(await proposalState(desk.author, id)).toMatchObject({
		state: 'in_review',
		stale: false,
		base_version: 2,
		current_version: 2
	});

	const { ref } = await approve(reviewerPage, { proposalId: id });
	expect(ref).toBe(`${slug}@3`);
	expect((await proposalState(desk.reviewer, id)).state).toBe('approved');
	await reviewerPage.context().close();
	await authorPage.context().close();
});
