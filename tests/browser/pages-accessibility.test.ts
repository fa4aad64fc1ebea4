import { mkdirSync } from 'node:fs';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type BrowserContext } from '@playwright/test';
import axe from 'axe-core';
import { createPerson, createSessionCookie, openOrm } from './support/accounts';
import { origin, seedFittedRelation, type SeededRelation } from './support/catalogue';

/**
 * Every main page, in the light and the dark theme: no serious or critical axe-core violation
 * (WCAG 2.x A/AA rules, including text contrast), a full-page screenshot for review, and no request
 * to any host but the app's own.
 *
 * Extend MAIN_PAGES with each area's pages; `path` may use the seeded relation, `as` signs in first.
 */
interface MainPage {
	name: string;
	path: (seed: SeededRelation) => string;
	as?: 'admin';
	/** A locator that shows the page finished drawing (e.g. a chart). */
	ready?: string;
}

export const MAIN_PAGES: MainPage[] = [
	{ name: 'overview', path: () => '/' },
	{ name: 'relations', path: () => '/relations', ready: '[data-testid="relation-row"]' },
	{ name: 'relation', path: (seed) => `/relations/${seed.slug}`, ready: '[data-testid="pl-diagram"] svg' },
	{ name: 'version', path: (seed) => `/relations/${seed.slug}/versions/1`, ready: '[data-testid="pl-diagram"] svg' },
	{ name: 'api-docs', path: () => '/docs/api', ready: '[data-testid="endpoint-table"]' },
	{ name: 'sign-in', path: () => '/sign-in' },
	{ name: 'account', path: () => '/account', as: 'admin' },
	{ name: 'admin', path: () => '/admin', as: 'admin' },
	{ name: 'calibrator-sets', path: () => '/calibrator-sets' },
	{ name: 'calibrator-set', path: (seed) => `/calibrator-sets/${seed.versions[0].calibrator_set.slug}` },
	{ name: 'worksheet', path: () => '/worksheet' },
	{ name: 'review', path: () => '/review', as: 'admin' },
	{ name: 'light-curves', path: () => '/light-curves', as: 'admin' },
	{ name: 'admin-settings', path: () => '/admin/settings', as: 'admin' },
	{ name: 'admin-audit', path: () => '/admin/audit', as: 'admin' }
];

const THEMES = ['light', 'dark'] as const;
const SCREENSHOTS = 'test-results/screenshots';
let orm: MikroORM;
let seeded: SeededRelation;
let adminSession: string;

test.beforeAll(async () => {
	test.setTimeout(90_000);
	orm = await openOrm();
	seeded = await seedFittedRelation(orm, { versions: 2, outliers: 2, label: 'a11y-w-vi' });
	const admin = await createPerson(orm, { label: 'a11y admin', roles: ['reader', 'admin'] });
	adminSession = await createSessionCookie(orm, admin.id);
	mkdirSync(SCREENSHOTS, { recursive: true });
});

test.afterAll(async () => {
	await orm?.close(true);
});

async function prepare(context: BrowserContext, theme: string, signedIn: boolean) {
	const cookies = [{ name: 'candlebook_theme', value: theme, url: origin }];
	if (signedIn) cookies.push({ name: 'candlebook_session', value: adminSession, url: origin });
	await context.addCookies(cookies);
}

for (const theme of THEMES) {
	for (const main of MAIN_PAGES) {
		test(`${main.name} (${theme}): no serious or critical axe violations, only the app's own host`, async ({
			browser
		}) => {
			// bypassCSP: axe-core is injected as an inline script, which the app's policy rightly refuses.
			const context = await browser.newContext({ viewport: { width: 1280, height: 900 }, bypassCSP: true });
			await prepare(context, theme, main.as === 'admin');
			const page = await context.newPage();
			const foreign: string[] = [];
			page.on('request', (request) => {
				const url = new URL(request.url());
				if (url.protocol !== 'data:' && url.protocol !== 'blob:' && url.host !== new URL(origin).host)
					foreign.push(url.href);
			});
			const response = await page.goto(main.path(seeded));
			expect(response?.status()).toBe(200);
			await expect(page.locator('html')).toHaveAttribute('data-theme', theme);
			if (main.ready) await expect(page.locator(main.ready).first()).toBeVisible();
			await page.evaluate(() => document.fonts.ready);

			await page.addScriptTag({ content: axe.source });
			const results = await page.evaluate(() =>
				(window as unknown as { axe: typeof axe }).axe.run(document, {
					runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] }
				})
			);
			const serious = results.violations
				.filter((violation) => violation.impact === 'serious' || violation.impact === 'critical')
				.map((violation) => ({
					rule: violation.id,
					impact: violation.impact,
					help: violation.help,
					nodes: violation.nodes.slice(0, 5).map((node) => node.target.join(' '))
				}));
			expect(serious).toEqual([]);

			await page.screenshot({ path: `${SCREENSHOTS}/${main.name}-${theme}.png`, fullPage: true });
			expect(foreign).toEqual([]);
			await context.close();
		});
	}
}

test('the header keeps every section reachable at half a laptop screen (680 px)', async ({ browser }) => {
	const context = await browser.newContext({ viewport: { width: 680, height: 800 } });
	const page = await context.newPage();
	await page.goto('/relations');
	const nav = page.getByRole('navigation', { name: 'Primary' });
	for (const link of await nav.getByRole('link').all()) {
		await expect(link).toBeVisible();
		const box = (await link.boundingBox())!;
		expect(box.x + box.width).toBeLessThanOrEqual(680);
	}
	await page.screenshot({ path: `${SCREENSHOTS}/relations-680.png`, fullPage: true });
	// No sideways scrolling of the page itself: name any element that sticks out, outside scroll boxes.
	const sticking = await page.evaluate(() =>
		[...document.querySelectorAll('body *')]
			.filter((element) => element.getBoundingClientRect().right > document.documentElement.clientWidth + 1)
			.filter((element) => !element.closest('.overflow-x-auto, .overflow-auto'))
			.slice(0, 5)
			.map((element) => `${element.tagName.toLowerCase()}.${[...element.classList].join('.')}`)
	);
	expect(sticking).toEqual([]);
	expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(680);
	await context.close();
});
