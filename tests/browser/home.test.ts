import { expect, test } from '@playwright/test';

test('the home page renders with the bundled Noto Sans and talks only to 127.0.0.1', async ({ page }) => {
	const requested: URL[] = [];
	page.on('request', (request) => requested.push(new URL(request.url())));

	await page.goto('/');
	await expect(page.getByRole('heading', { level: 1 })).toContainText('Period–luminosity calibrations');
	await page.evaluate(() => document.fonts.ready);

	const fontLoaded = await page.evaluate(() => document.fonts.check('600 16px "Noto Sans"'));
	expect(fontLoaded).toBe(true);
	const fontFiles = requested.filter((url) => url.pathname.endsWith('.woff2'));
	expect(fontFiles.length).toBeGreaterThan(0);
	expect(fontFiles.every((url) => url.pathname.startsWith('/_app/immutable/assets/noto-sans'))).toBe(true);

	const foreignHosts = requested.filter((url) => url.protocol !== 'data:' && url.hostname !== '127.0.0.1');
	expect(foreignHosts.map(String)).toEqual([]);
});

test('navigation lists only pages that exist', async ({ page, request }) => {
	await page.goto('/');
	const links = await page.getByRole('navigation', { name: 'Primary' }).getByRole('link').all();
	expect(links.length).toBeGreaterThan(0);
	for (const link of links) {
		const href = await link.getAttribute('href');
		expect((await request.get(href!)).status(), href!).toBe(200);
	}
});

test('health and readiness answer JSON; unknown API paths are problem+json 404s', async ({ request }) => {
	expect(await (await request.get('/healthz')).json()).toEqual({ status: 'ok' });
	const ready = await request.get('/readyz');
	expect(ready.status()).toBe(200);
	expect((await ready.json()).status).toBe('ready');

	const missing = await request.get('/api/v1/no-such-thing');
	expect(missing.status()).toBe(404);
	expect(missing.headers()['content-type']).toContain('application/problem+json');
	const body = await missing.json();
	expect(body).toMatchObject({ status: 404, title: 'Not found', type: '/docs/problems#not-found' });
});
