import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { relationVersionDigest, type RelationVersionContent } from '../../src/lib/calibration/index';
import { Proposal, RelationVersion, VersionLifecycle } from '../../src/lib/server/entities/index';
import { createGroupRow, openOrm, uniqueSlug } from './support/accounts';
import { approve, requestChanges } from './support/review-flow';
import {
	api,
	approveOverApi,
	calibratorSet,
	proposal,
	relation,
	resubmit,
	reviewPerson,
	signedInContext,
	type Person
} from './support/review-setup';

/** The review desk in the browser: queue, comparison, decisions, and a version's lifecycle. */
let orm: MikroORM;
let group: string;
let author: Person;
let reviewer: Person;
/** Holds both roles, so may propose and review — but never review their own proposal. */
let reviewingCurator: Person;
let set: string;

test.beforeAll(async () => {
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('review-desk'));
	author = await reviewPerson(orm, 'desk author', ['curator'], group);
	reviewer = await reviewPerson(orm, 'desk reviewer', ['reviewer'], group);
	reviewingCurator = await reviewPerson(orm, 'desk reviewing curator', ['curator', 'reviewer'], group);
	set = await calibratorSet(author, group);
});

test.afterAll(async () => {
	await orm?.close(true);
});

/** A relation with version 1 approved, and a submitted refit on the second calibrator revision. */
async function relationWithRefit(rationale = 'Second revision: two stars dropped, two added, one remeasured.') {
	const slug = await relation(author, group);
	const first = await proposal(author, {
		set,
		revision: 1,
		relation: slug,
		title: 'First calibration',
		rationale: 'Initial *ML* fit.'
	});
	await approveOverApi(reviewer, first);
	const id = await proposal(author, { set, revision: 2, relation: slug, title: `Refit ${slug}`, rationale });
	return { slug, id };
}

const SIGNED = /^[+\u2212]\d+\.\d{2}$/;

test('a reviewer finds the refit waiting, compares it, asks for changes, and approves the resubmission', async ({
	browser
}) => {
	test.setTimeout(90_000);
	const { slug, id } = await relationWithRefit();
	const reviewerContext = await signedInContext(browser, orm, reviewer);
	const page = await reviewerContext.newPage();

	await page.goto('/review');
	await expect(page.getByRole('link', { name: 'Waiting for me', exact: false })).toHaveAttribute(
		'aria-current',
		'page'
	);
	await page.getByRole('link', { name: `Refit ${slug}` }).click();
	await expect(page).toHaveURL(new RegExp(`/review/${id}$`));
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(`Refit ${slug}`);
	await expect(page.getByTestId('proposal-state')).toHaveText('in review');
	await expect(page.getByTestId('approval-count')).toContainText('0 of 1 approval');

	// The page shows the same comparison the API computes, formatted.
	const wire = (await api(reviewer.token, 'GET', `/api/v1/proposals/${id}`)).body;
	for (const name of ['zero_point', 'slope'] as const) {
		const cell = page.getByTestId(`delta-over-sigma-${name}`);
		await expect(cell).toHaveText(SIGNED);
		const value = wire.comparison.coefficients.find((c: { name: string }) => c.name === name).delta_over_sigma;
		expect(Number((await cell.innerText()).replace('\u2212', '-'))).toBeCloseTo(value, 2);
	}
	const calibrators = wire.comparison.calibrators;
	expect(calibrators.added).toHaveLength(2);
	expect(calibrators.removed).toHaveLength(2);
	await expect(page.getByTestId('calibrator-summary')).toContainText(
		`2 added, 2 removed, ${calibrators.changed.length} changed, ${calibrators.unchanged_count} unchanged`
	);
	await expect(page.getByTestId('prediction-table').locator('tbody tr')).toHaveCount(3);

	// Both relations are drawn over the calibrators, each a line with a path.
	const figure = page.getByTestId('overlay-figure');
	await expect(figure.locator('svg[role="img"]')).toBeVisible();
	await expect(figure.locator('g.overlay-current path')).toHaveCount(1);
	await expect(figure.locator('g.overlay-proposed path')).toHaveCount(1);
	expect(await figure.locator('g.overlay-proposal-calibrators circle').count()).toBeGreaterThan(30);

	// Chosen periods recompute the downstream table.
	await page.getByLabel('Periods (days)').fill('5, 20');
	await page.getByRole('button', { name: 'Show' }).click();
	await expect(page.getByTestId('prediction-table').locator('tbody tr')).toHaveCount(2);
	await expect(page.getByTestId('prediction-table')).toContainText('20.0');

	await requestChanges(page, { proposalId: id, comment: 'Please say **why** the two stars were dropped.' });
	await expect(page.getByTestId('comment-thread')).toContainText('asked for changes');

	// The author sees the comment, rendered from Markdown, and the way to revise.
	const authorContext = await signedInContext(browser, orm, author);
	const authorPage = await authorContext.newPage();
	await authorPage.goto(`/review/${id}`);
	await expect(authorPage.getByTestId('comment-thread').locator('strong')).toHaveText('why');
	await expect(authorPage.getByTestId('comment-thread')).toContainText('the two stars were dropped');
	await expect(authorPage.getByRole('link', { name: 'Revise the fit or rationale' })).toHaveAttribute(
		'href',
		`/relations/${slug}/refit?proposal=${id}`
	);
	await authorPage.goto('/review?view=mine');
	await expect(authorPage.getByRole('link', { name: `Refit ${slug}` })).toBeVisible();

	await resubmit(author, id, 'Two stars were dropped: their host distances were revised. Two new ones were added.');
	const { ref, digest } = await approve(page, { proposalId: id, comment: 'Thanks, clear now.' });
	expect(ref).toBe(`${slug}@2`);
	const stored = await orm.em.fork().findOneOrFail(RelationVersion, { relation: { slug }, number: 2 });
	expect(digest).toBe(stored.digest);
	expect(relationVersionDigest(stored.content as unknown as RelationVersionContent)).toBe(digest);
	await expect(page.getByTestId('proposal-state')).toHaveText('approved');

	// Deprecate version 1 in favour of the new version on its lifecycle page.
	await page.goto(`/relations/${slug}/versions/1/lifecycle`);
	await expect(page.getByTestId('lifecycle-status')).toHaveText('superseded');
	await page.getByLabel('Reason').fill('Superseded by the refit on revision 2 of the calibrators.');
	await page.getByLabel('Successor').selectOption(String(2));
	await page.getByRole('button', { name: `Deprecate ${slug}@1` }).click();
	await expect(page.getByTestId('lifecycle-status')).toHaveText('deprecated');
	await expect(page.getByTestId('lifecycle-successor')).toHaveText(`${slug}@2`);
	const lifecycle = await orm.em.fork().findOneOrFail(VersionLifecycle, { relation: { slug }, number: 1 });
	expect(lifecycle).toMatchObject({ status: 'deprecated', successorNumber: 2 });

	// The author may not deprecate, and is told why.
	await authorPage.goto(`/relations/${slug}/versions/2/lifecycle`);
	await expect(authorPage.getByRole('button', { name: /Deprecate/ })).toHaveCount(0);
	await expect(authorPage.getByTestId('lifecycle-unavailable')).toContainText('Only reviewers and admins deprecate');
	await reviewerContext.close();
	await authorContext.close();
});

test('a reviewer who wrote a proposal cannot approve it, neither by the page nor by a forged post', async ({
	browser
}) => {
	const slug = await relation(reviewingCurator, group);
	const id = await proposal(reviewingCurator, { set, revision: 1, relation: slug, title: `Own refit ${slug}` });
	const context = await signedInContext(browser, orm, reviewingCurator);
	const page = await context.newPage();

	await page.goto('/review?view=waiting');
	await expect(page.getByRole('link', { name: `Own refit ${slug}` })).toHaveCount(0);
	await page.goto('/review?view=mine');
	await page.getByRole('link', { name: `Own refit ${slug}` }).click();
	await expect(page.getByRole('button', { name: 'Approve', exact: true })).toHaveCount(0);
	await expect(page.getByTestId('why-unavailable')).toContainText('Nobody reviews their own proposal.');
	await expect(page.getByRole('button', { name: 'Withdraw' })).toBeVisible();

	const forged = await page.request.post(`/review/${id}?/approve`, {
		form: { comment: 'self' },
		// As a browser's own form post: same origin, asking for the HTML page.
		headers: { origin: new URL(page.url()).origin, accept: 'text/html' },
		maxRedirects: 0
	});
	expect(forged.status()).toBe(403);
	const stored = await orm.em.fork().findOneOrFail(Proposal, id);
	expect(stored).toMatchObject({ state: 'in_review', approvals: [] });

	// Another reviewer sees it waiting, and can approve it.
	const other = await signedInContext(browser, orm, reviewer);
	const reviewerPage = await other.newPage();
	await reviewerPage.goto(`/review?view=waiting&group=${group}`);
	await expect(reviewerPage.getByRole('link', { name: `Own refit ${slug}` })).toBeVisible();
	await reviewerPage.goto(`/review?view=all&group=${group}&state=withdrawn`);
	await expect(reviewerPage.getByTestId('queue-empty')).toBeVisible();
	await context.close();
	await other.close();
});

test('the review actions work from the keyboard alone', async ({ browser }) => {
	test.setTimeout(60_000);
	const slug = await relation(author, group);
	const id = await proposal(author, { set, revision: 1, relation: slug, title: `Keyboard ${slug}` });
	const context = await signedInContext(browser, orm, reviewer);
	const page = await context.newPage();

	const focused = () =>
		page.evaluate(() => {
			const element = document.activeElement as HTMLElement | null;
			return { id: element?.id ?? '', text: element?.textContent?.trim() ?? '' };
		});
	/** Tabs forward until the review comment has focus, as a keyboard user would. */
	async function tabToComment() {
		for (let i = 0; i < 80; i++) {
			await page.keyboard.press('Tab');
			if ((await focused()).id === 'review-comment') return;
		}
		throw new Error('Tab never reached the review comment');
	}

	await page.goto(`/review/${id}`);
	await tabToComment();
	await page.keyboard.type('The slope looks steep: check the period filter.');
	await page.keyboard.press('Tab');
	expect((await focused()).text).toBe('Approve');
	await page.keyboard.press('Tab');
	expect((await focused()).text).toBe('Request changes');
	await page.keyboard.press('Space');
	await expect(page.getByTestId('proposal-state')).toHaveText('changes requested');
	await expect(page.getByTestId('comment-thread')).toContainText('check the period filter');

	await resubmit(author, id, 'The period filter is the default; the slope agrees within 1σ.');
	await page.goto(`/review/${id}`);
	await tabToComment();
	await page.keyboard.press('Tab');
	await page.keyboard.press('Tab');
	await page.keyboard.press('Shift+Tab');
	expect((await focused()).text).toBe('Approve');
	await page.keyboard.press('Enter');
	await expect(page.getByTestId('frozen-ref')).toHaveText(`${slug}@1`);
	await context.close();
});
