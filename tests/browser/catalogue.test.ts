import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type Page } from '@playwright/test';
import { openOrm } from './support/accounts';
import { insertBulkRelations, seedFittedRelation, type SeededRelation } from './support/catalogue';

/**
 * The catalogue and relation screens against the production build: filtering (with and without
 * scripts, kept in the URL), the PL diagram's marks, volume, and the theme switch.
 */
let orm: MikroORM;
let seeded: SeededRelation;
const BULK = `bulk${crypto.randomUUID().slice(0, 6)}`;
const BULK_COUNT = 500;

test.beforeAll(async () => {
	test.setTimeout(120_000);
	orm = await openOrm();
	seeded = await seedFittedRelation(orm, { versions: 2, outliers: 2 });
	await insertBulkRelations(orm, BULK_COUNT, BULK);
});

test.afterAll(async () => {
	await orm?.close(true);
});

const rows = (page: Page) => page.getByTestId('relation-row');

/** Bulk rows with band W_JK: every fifth of them (i % 5 === 1), see insertBulkRelations. */
const BULK_W_JK = Array.from({ length: BULK_COUNT }, (_, i) => i).filter((i) => i % 5 === 1).length;

test('filtering puts the filter in the URL, survives a reload, and the no-script page shows the same list', async ({
	page,
	browser
}) => {
	await page.goto('/relations');
	await expect(page.getByTestId('catalogue-filter')).toHaveAttribute('data-ready', 'true');
	await page.getByLabel('Search').fill(seeded.slug);
	await expect(page).toHaveURL(new RegExp(`q=${seeded.slug}`));
	await expect(rows(page)).toHaveCount(1);
	await expect(rows(page).first()).toContainText(seeded.title);
	await expect(rows(page).first()).toContainText('v2');

	await page.getByLabel('Search').fill(BULK);
	await page.getByLabel('Band').selectOption('W_JK');
	await expect(page).toHaveURL(/band=W_JK/);
	await expect(page).toHaveURL(new RegExp(`q=${BULK}`));
	await expect(rows(page)).toHaveCount(Math.min(BULK_W_JK, 50));
	for (const text of await rows(page).allInnerTexts()) expect(text).toContain('W_JK');

	await page.reload();
	await expect(page.getByTestId('catalogue-filter')).toHaveAttribute('data-ready', 'true');
	await expect(page.getByLabel('Band')).toHaveValue('W_JK');
	await expect(page.getByLabel('Search')).toHaveValue(BULK);
	await expect(rows(page)).toHaveCount(Math.min(BULK_W_JK, 50));

	const noScript = await browser.newContext({ javaScriptEnabled: false });
	const plain = await noScript.newPage();
	await plain.goto(`/relations?band=W_JK&q=${BULK}&state=proposed`);
	await expect(plain.getByTestId('relation-row')).toHaveCount(Math.min(BULK_W_JK, 50));
	// The GET form itself works without scripts.
	await plain.getByLabel('State').selectOption('active');
	await plain.getByRole('button', { name: 'Apply filter' }).click();
	await expect(plain).toHaveURL(/state=active/);
	await expect(plain.getByText('No relation matches this filter')).toBeVisible();
	await noScript.close();
});

test('the relation page draws every used and rejected calibrator of the current version', async ({ page }) => {
	const current = seeded.versions.at(-1)!;
	expect(current.rejected.length).toBeGreaterThan(0);
	await page.goto(`/relations/${seeded.slug}`);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(seeded.title);
	const diagram = page.getByTestId('pl-diagram');
	await expect(diagram.locator('svg[role="img"]')).toBeVisible();
	await expect(diagram.locator('g.cb-used-calibrators > *')).toHaveCount(current.n_used);
	await expect(diagram.locator('g.cb-rejected-calibrators > *')).toHaveCount(current.rejected.length);
	await expect(diagram.locator('g.cb-fitted-relation')).toHaveCount(1);
	await expect(page.getByTestId('residual-panel').locator('svg')).toBeVisible();
	await expect(page.getByText(`Rejected by σ-clipping (${current.rejected.length})`)).toBeVisible();
	await expect(page.getByTestId('digest')).toContainText(current.digest);
	await expect(page.getByTestId('pin-snippet')).toContainText(`/api/v1/pins/${current.ref}`);
	await expect(page.getByTestId('pin-snippet')).toContainText(current.digest);
	await page.getByRole('tab', { name: 'BibTeX' }).click();
	await expect(page.getByTestId('citation-bibtex')).toContainText(`candlebook_${seeded.slug.replace(/-/g, '_')}_v2`);
	await expect(page.getByTestId('version-timeline').getByRole('listitem')).toHaveCount(2);

	await page.getByTestId('reproduce-button').click();
	await expect(page.getByTestId('reproduce-result')).toContainText('Reproduced: the refit gives the same digest.');
	await expect(page.getByTestId('reproduce-result')).toContainText(current.digest);
});

test('without scripts a version page shows every citation format and snippet language, one after another', async ({
	browser
}) => {
	const noScript = await browser.newContext({ javaScriptEnabled: false });
	const page = await noScript.newPage();
	const current = seeded.versions.at(-1)!;
	const number = seeded.versions.length;
	await page.goto(`/relations/${seeded.slug}/versions/${number}`);
	await expect(page.getByTestId('citation-noscript-bibtex')).toContainText(
		`candlebook_${seeded.slug.replace(/-/g, '_')}_v${number}`
	);
	await expect(page.getByTestId('citation-noscript-datacite')).toContainText(seeded.slug);
	for (const language of ['python', 'typescript'])
		await expect(page.getByTestId(`pin-snippet-noscript-${language}`)).toContainText(`/api/v1/pins/${current.ref}`);
	await noScript.close();
});

test('a superseded version has its own page, banner and snippet', async ({ page }) => {
	const first = seeded.versions[0];
	await page.goto(`/relations/${seeded.slug}/versions/1`);
	await expect(page.getByText('A newer version is current')).toBeVisible();
	await expect(page.getByTestId('pin-snippet')).toContainText(`/api/v1/pins/${first.ref}`);
	await expect(page.getByTestId('pin-snippet-noscript-python')).toBeHidden();
	await expect(page.getByTestId('frozen-content')).toContainText(first.calibrator_set.digest);
	await expect(page.getByTestId('pl-diagram').locator('g.cb-used-calibrators > *')).toHaveCount(first.n_used);
	// Nobody signed in: no lifecycle link.
	await expect(page.getByTestId('lifecycle-link')).toHaveCount(0);
	expect((await page.request.get(`/relations/${seeded.slug}/versions/9`)).status()).toBe(404);
});

test(`${BULK_COUNT} more relations: the first rows and each filter change arrive without visible lag`, async ({
	page
}) => {
	const navigation: number[] = [];
	const interactive: number[] = [];
	const filtering: number[] = [];
	for (let i = 0; i < 3; i++) {
		const started = Date.now();
		// Only this test's relations: the integration tests share the database and add their own.
		await page.goto(`/relations?limit=200&q=${BULK}`);
		await expect(rows(page).first()).toBeVisible();
		navigation.push(Date.now() - started);
		await expect(page.getByTestId('catalogue-filter')).toHaveAttribute('data-ready', 'true');
		interactive.push(Date.now() - started);
	}
	await expect(rows(page)).toHaveCount(200);
	const bands = ['V', 'Ks', 'F160W', 'W_JK'];
	const bandCells = () => rows(page).locator('td:nth-child(2)');
	for (const band of bands) {
		const started = Date.now();
		await page.getByLabel('Band').selectOption(band);
		// Every bulk band has 100 rows (see insertBulkRelations).
		await expect(bandCells()).toHaveCount(BULK_COUNT / 5);
		await expect(bandCells()).toHaveText(Array(BULK_COUNT / 5).fill(band));
		filtering.push(Date.now() - started);
		await expect(page).toHaveURL(new RegExp(`band=${band}(&|$)`));
		await expect(page.getByTestId('catalogue-status')).not.toContainText('Updating');
	}
	const report = `navigation to first rows: ${navigation.join(', ')} ms; to a working filter: ${interactive.join(', ')} ms; filter change to updated table: ${filtering.join(', ')} ms`;
	console.log(`[catalogue timings] ${report}`);
	test.info().annotations.push({ type: 'timings', description: report });
	// Regression bounds, not the goal: the goal is under a second for a filter change, but on this
	// shared 2-core machine the measured times are reported above and these bounds only catch a
	// page that has become much slower (e.g. rendering that grows with the square of the rows).
	expect(Math.max(...filtering)).toBeLessThan(5000);
	expect(Math.max(...navigation)).toBeLessThan(8000);
});

test('the theme switch applies at once, persists in a cookie, and the server renders it without scripts', async ({
	page,
	browser
}) => {
	await page.goto('/relations');
	await expect(page.getByTestId('catalogue-filter')).toHaveAttribute('data-ready', 'true');
	await page.getByRole('button', { name: 'Dark theme' }).click();
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'dark');
	const ink = await page.evaluate(() => getComputedStyle(document.documentElement).color);
	await page.reload();
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'dark');
	await expect(page.getByRole('button', { name: 'Dark theme' })).toHaveAttribute('aria-pressed', 'true');
	const served = await page.request.get('/relations');
	expect(await served.text()).toContain('data-theme="dark"');
	await page.getByRole('button', { name: 'Light theme' }).click();
	await expect(page.locator('html')).toHaveAttribute('data-theme', 'light');
	expect(await page.evaluate(() => getComputedStyle(document.documentElement).color)).not.toBe(ink);

	const noScript = await browser.newContext({ javaScriptEnabled: false });
	const plain = await noScript.newPage();
	await plain.goto('/docs/api');
	await plain.getByRole('button', { name: 'Dark theme' }).click();
	await expect(plain).toHaveURL(/\/docs\/api$/);
	await expect(plain.locator('html')).toHaveAttribute('data-theme', 'dark');
	await noScript.close();
});
