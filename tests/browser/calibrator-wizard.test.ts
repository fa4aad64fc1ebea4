import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type Browser, type BrowserContext, type Page } from '@playwright/test';
import { CalibratorRevision, CalibratorSet, Proposal } from '../../src/lib/server/entities/index';
import { hostCalibratorCsv } from '../support/registry';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';
import { fitAndPropose, reviseProposal, uploadThroughWizard } from './support/curator-flow';

/**
 * The curator's screens end to end against the production build: a calibrator set, the upload wizard
 * (row errors, mapping and units, preview, commit), a relation, a live fit and a proposal — with scripts
 * and without. The calibrators are invented (tests/support/registry.ts: a W_VI relation with zero point
 * −5.9 and slope −3.3 at μ = 18.5), so the fitted line can be checked against the values that made them.
 */
const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
const TRUE_ZERO_POINT = -5.9;
const TRUE_SLOPE = -3.3;
let orm: MikroORM;
let group: string;
let curatorId: string;
let reviewerToken: string;

test.beforeAll(async () => {
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('wizard'));
	const curator = await createPerson(orm, {
		label: 'wizard curator',
		roles: ['reader', 'curator'],
		groups: [{ group, standing: 'member' }]
	});
	curatorId = curator.id;
	const reviewer = await createPerson(orm, {
		label: 'wizard reviewer',
		roles: ['reader', 'reviewer'],
		groups: [{ group, standing: 'member' }]
	});
	reviewerToken = await createBearerToken(orm, reviewer.id, ['review', 'write']);
});

test.afterAll(async () => {
	await orm?.close(true);
});

async function curatorContext(browser: Browser, javaScriptEnabled: boolean): Promise<BrowserContext> {
	const context = await browser.newContext({ baseURL: origin, javaScriptEnabled });
	const value = await createSessionCookie(orm, curatorId);
	await context.addCookies([{ name: 'candlebook_session', value, url: origin }]);
	return context;
}

async function createSetThroughForm(page: Page, slug: string) {
	await page.goto('/calibrator-sets/new');
	await page.getByLabel('Slug').fill(slug);
	await page.getByLabel('Title').fill(`Invented calibrators ${slug}`);
	await page.getByLabel('Owning group').selectOption(group);
	await page.getByLabel('Licence').fill('CC-BY-4.0');
	await page.getByLabel('Required citations').fill('Invented et al. 2026, for browser tests');
	await page.getByRole('button', { name: 'Create the set' }).click();
	await page.waitForURL(new RegExp(`/calibrator-sets/${slug}\\?created=1`));
	await expect(page.getByText('Invented et al. 2026, for browser tests')).toBeVisible();
}

async function createRelationThroughForm(page: Page, slug: string) {
	await page.goto('/relations/new');
	await page.getByLabel('Slug').fill(slug);
	await page.getByLabel('Title').fill(`Invented W_VI relation ${slug}`);
	await page.getByLabel('Band').selectOption('W_VI');
	await page.getByLabel('Population').selectOption('classical_fundamental');
	await page.getByLabel('Anchor').selectOption('geometric_host');
	await page.getByLabel('Owning group').selectOption(group);
	await page.getByRole('button', { name: 'Create the relation' }).click();
	await page.waitForURL(new RegExp(`/relations/${slug}/refit\\?created=1`));
}

const number = (text: string | null) => Number((text ?? '').trim().split(/\s/)[0].replace('−', '-'));

test('a curator uploads through the wizard, fits live, and submits a proposal (scripts on)', async ({ browser }) => {
	test.setTimeout(180_000);
	const context = await curatorContext(browser, true);
	const page = await context.newPage();
	const setSlug = uniqueSlug('wizard-set');
	await createSetThroughForm(page, setSlug);

	// A bad file: every row problem by line, column, value and reason; nothing stored.
	const bad = [
		'star,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		'Bad A,classical_fundamental,ten,12.1,0.05,18.5,0.03',
		'Bad B,classical_sideways,10.2,12.0,0.05,18.5,0.03',
		'Bad C,classical_fundamental,12.0,12.0,-0.05,18.5,0.03'
	].join('\n');
	await page.goto(`/calibrator-sets/${setSlug}/upload`);
	await page
		.getByLabel('Calibrator table')
		.setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from(bad) });
	await page.getByRole('button', { name: 'Read the file' }).click();
	await page.getByRole('button', { name: 'Check the table' }).click();
	const issues = page.getByTestId('row-issues').locator('tbody tr');
	await expect(issues).toHaveCount(3);
	await expect(issues.nth(0)).toContainText('2');
	await expect(issues.nth(0)).toContainText('period_days');
	await expect(issues.nth(0)).toContainText('ten');
	await expect(issues.nth(0)).toContainText('is not a number');
	await expect(issues.nth(1)).toContainText('population');
	await expect(issues.nth(1)).toContainText('classical_sideways');
	await expect(issues.nth(2)).toContainText('mag_err_W_VI');
	await expect(issues.nth(2)).toContainText('must not be negative');
	const set = await orm.em.fork().findOneOrFail(CalibratorSet, { slug: setSlug });
	expect(await orm.em.fork().count(CalibratorRevision, { calibratorSet: set.id })).toBe(0);

	// A good file whose period column is in hours under its own name: mapped, converted, previewed.
	const canonical = hostCalibratorCsv({ count: 40, seed: 11 });
	const lines = canonical.trim().split('\n');
	const header = lines[0].split(',');
	const periodIndex = header.indexOf('period_days');
	header[periodIndex] = 'P_hours';
	const inHours = [
		header.join(','),
		...lines.slice(1).map((line) => {
			const cells = line.split(',');
			cells[periodIndex] = String(Number(cells[periodIndex]) * 24);
			return cells.join(',');
		})
	].join('\n');
	await page.goto(`/calibrator-sets/${setSlug}/upload`);
	await page
		.getByLabel('Calibrator table')
		.setInputFiles({ name: 'hours.csv', mimeType: 'text/csv', buffer: Buffer.from(inHours) });
	await page.getByRole('button', { name: 'Read the file' }).click();
	await page.getByRole('button', { name: 'Check the table' }).click();
	// Unmapped, the column is refused at line 1 with the reason.
	await expect(page.getByTestId('row-issues')).toContainText('P_hours');
	await expect(page.getByTestId('row-issues')).toContainText('required field "period_days"');
	await page.getByLabel('Field for column P_hours').selectOption('period_days');
	await page.getByLabel('Unit for column P_hours').selectOption('h');
	await page.getByRole('button', { name: 'Check the table' }).click();
	await expect(page.getByTestId('upload-counts')).toContainText('40');
	await expect(page.getByTestId('upload-changes')).toContainText('40 added');
	// Hours became days: the first star's period is the canonical file's.
	const firstPeriod = Number(lines[1].split(',')[periodIndex]);
	const previewPeriods = await page
		.getByTestId('upload-rows')
		.locator('tbody tr')
		.first()
		.locator('td')
		.allTextContents();
	expect(previewPeriods.map(Number).some((value) => Math.abs(value - firstPeriod) < 1e-6)).toBe(true);
	await page.getByRole('button', { name: 'Commit revision' }).click();
	await page.waitForURL(/\?uploaded=1/);
	const stored = await orm.em.fork().findOneOrFail(CalibratorRevision, { calibratorSet: set.id, number: 1 });
	expect(stored.digest).toMatch(/^sha256:[0-9a-f]{64}$/);
	await expect(page.locator('tr[data-revision="1"]')).toContainText(stored.digest);
	await expect(page.locator('tr[data-revision="1"] a', { hasText: 'CSV' })).toHaveAttribute(
		'href',
		`/api/v1/calibrator-sets/${setSlug}/revisions/1?format=csv`
	);

	// A second revision through the reusable flow, then the diff between the two.
	const { revision } = await uploadThroughWizard(page, { setSlug, csv: hostCalibratorCsv({ count: 36, seed: 12 }) });
	expect(revision).toBe(2);
	await expect(page.getByTestId('revision-diff-summary')).toContainText('Revision 1 → 2');
	await expect(page.getByTestId('revision-diff-summary')).toContainText('4 removed');

	// A relation, then a live fit that follows the options.
	const relationSlug = uniqueSlug('wizard-rel');
	await createRelationThroughForm(page, relationSlug);
	await page.getByLabel('Calibrator revision').selectOption(`${setSlug}@1`);
	await expect(page.getByTestId('n-used')).toHaveText('40 of 40', { timeout: 30_000 });
	const zeroPoint = number(await page.getByTestId('zero-point').textContent());
	const slope = number(await page.getByTestId('slope').textContent());
	// The invented stars were drawn from M = −5.9 − 3.3 (log P − 1) with σ_int = 0.08 mag.
	expect(Math.abs(zeroPoint - TRUE_ZERO_POINT)).toBeLessThan(0.15);
	expect(Math.abs(slope - TRUE_SLOPE)).toBeLessThan(0.3);
	await page.getByLabel('log P from').fill('1.0');
	await expect(page.getByTestId('n-used')).not.toHaveText('40 of 40', { timeout: 30_000 });
	await expect(page.getByTestId('fit-result')).toContainText('left out: outside period range');
	// Asking beyond the calibrators' periods is flagged as an extrapolation.
	await page.getByLabel('log P to').fill('3.5');
	await expect(page.getByTestId('fit-cautions')).toContainText('wider than the calibrators cover', { timeout: 30_000 });
	// Even the lower limit lies below the shortest period kept, so the caution stays until both go.
	await expect(page.getByTestId('fit-cautions')).toContainText('The period range asked for (log P 1 to 3.5)');
	await page.getByLabel('log P to').fill('');
	await page.getByLabel('log P from').fill('');
	await expect(page.getByTestId('n-used')).toHaveText('40 of 40', { timeout: 30_000 });
	await expect(page.getByTestId('fit-cautions')).not.toContainText('wider than the calibrators cover', {
		timeout: 30_000
	});
	// What stays is honest: the stars carry σ_int = 0.08 mag beyond their stated errors, so a weighted fit's
	// χ²/dof is well above 1 + 3·√(2/dof) and the page says its errors were scaled (common practice).
	await expect(page.getByTestId('fit-cautions')).toContainText('the stated per-star errors do not explain the scatter');
	await expect(page.getByTestId('pl-plot').getByRole('img', { name: /^PL diagram of the fit/ })).toBeVisible();

	// Rationale in Markdown, previewed as sanitised HTML on the server, then saved and submitted.
	const editor = page.getByTestId('proposal-form');
	await editor.getByLabel('Proposal title').fill('Refit without the short periods');
	await editor
		.getByLabel('Rationale (Markdown)')
		.fill('Short periods are **excluded**.\n\n<script>window.pwned = 1</script>');
	await editor.getByRole('button', { name: 'Preview rationale' }).click();
	await expect(page.getByTestId('rationale-preview').locator('strong')).toHaveText('excluded');
	expect(await page.getByTestId('rationale-preview').innerHTML()).not.toContain('<script');
	await editor.getByRole('button', { name: 'Save as draft proposal' }).click();
	await page.waitForURL(/saved=1/);
	await expect(page.getByRole('heading', { name: 'Proposal (draft)' })).toBeVisible();
	const proposalId = new URL(page.url()).searchParams.get('proposal')!;
	await page.getByRole('button', { name: 'Submit for review' }).click();
	await page.waitForURL(/submitted=1/);
	await expect(page.getByRole('heading', { name: 'Proposal (in review)' })).toBeVisible();
	const proposal = await orm.em.fork().findOneOrFail(Proposal, proposalId);
	expect(proposal.state).toBe('in_review');
	expect(proposal.rationale).toContain('**excluded**');
	await context.close();
});

test('the upload wizard, refit and revision work without scripts', async ({ browser }) => {
	test.setTimeout(180_000);
	const context = await curatorContext(browser, false);
	const page = await context.newPage();
	const setSlug = uniqueSlug('plain-set');
	await createSetThroughForm(page, setSlug);
	const { revision } = await uploadThroughWizard(page, { setSlug, csv: hostCalibratorCsv({ count: 30, seed: 21 }) });
	expect(revision).toBe(1);

	const relationSlug = uniqueSlug('plain-rel');
	await createRelationThroughForm(page, relationSlug);
	const { proposalId } = await fitAndPropose(page, {
		relationSlug,
		setSlug,
		revision,
		rationale: 'All *thirty* invented stars.'
	});
	await expect(page.getByTestId('n-used')).toHaveText('30 of 30');

	// A reviewer sends it back; the curator revises the rationale and resubmits.
	const review = await fetch(`${origin}/api/v1/proposals/${proposalId}/reviews`, {
		method: 'POST',
		headers: { authorization: `Bearer ${reviewerToken}`, 'content-type': 'application/json' },
		body: JSON.stringify({ decision: 'request_changes', comment: 'Say why no clipping.' })
	});
	expect(review.status).toBe(201);
	expect((await orm.em.fork().findOneOrFail(Proposal, proposalId)).state).toBe('changes_requested');
	await reviseProposal(page, {
		relationSlug,
		proposalId,
		rationale: 'All thirty stars; no clipping, none is an outlier.'
	});
	const revised = await orm.em.fork().findOneOrFail(Proposal, proposalId);
	expect(revised.state).toBe('in_review');
	expect(revised.rationale).toBe('All thirty stars; no clipping, none is an outlier.');
	await context.close();
});
