import { request as httpRequest } from 'node:http';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';
import { origin, seedFittedRelation, type SeededRelation } from './support/catalogue';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * Work a caller without an account can cause is bounded, and text no upload may hold is refused by
 * where it is, over real HTTP against the production build. The bounds are the documented ones:
 * reproduction < 200 bootstrap resamples for anonymous callers (the fit queue's own threshold), 16 KiB
 * for a visitor's form post.
 */
let orm: MikroORM;
let group: string;
let curatorToken: string;
let plainToken: string;
let sessionCookie: string;
let under: SeededRelation;
let over: SeededRelation;
const started = performance.now();

const bearer = (token: string) => ({ authorization: `Bearer ${token}` });

test.beforeAll(async () => {
	test.setTimeout(180_000);
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('cost'));
	const curator = await createPerson(orm, {
		label: 'cost curator',
		roles: ['reader', 'curator'],
		groups: [{ group, standing: 'member' }]
	});
	curatorToken = await createBearerToken(orm, curator.id, ['write']);
	const reader = await createPerson(orm, { label: 'cost reader', roles: ['reader'] });
	plainToken = await createBearerToken(orm, reader.id, []);
	sessionCookie = await createSessionCookie(orm, reader.id);
	under = await seedFittedRelation(orm, { label: 'cost-199', bootstrap: { resamples: 199, seed: 5 } });
	over = await seedFittedRelation(orm, { label: 'cost-200', bootstrap: { resamples: 200, seed: 5 } });
});

test.afterAll(async () => {
	await orm?.close();
	console.log(`cost and hostile input: ${(performance.now() - started).toFixed(0)} ms`);
});

test.describe('reproducing a version without signing in is bounded (< 200 bootstrap resamples)', () => {
	test('199 resamples: an anonymous caller gets the reproduction', async ({ request }) => {
		const t0 = performance.now();
		const response = await request.post(`/api/v1/relations/${under.slug}/versions/1/reproduce`);
		console.log(`anonymous reproduction, 199 resamples × 40 calibrators: ${(performance.now() - t0).toFixed(0)} ms`);
		expect(response.status()).toBe(200);
		expect(await response.json()).toMatchObject({ digest_matches: true, digest: under.versions[0].digest });
	});

	test('200 resamples: refused anonymously (401 naming the bound), answered with any token or session', async ({
		request
	}) => {
		const path = `/api/v1/relations/${over.slug}/versions/1/reproduce`;
		const t0 = performance.now();
		const refused = await request.post(path);
		console.log(`anonymous refusal, 200 resamples: ${(performance.now() - t0).toFixed(0)} ms`);
		expect(refused.status()).toBe(401);
		expect(refused.headers()['www-authenticate']).toBe('Bearer');
		await expectMatchesOpenApi(request, refused, `POST /api/v1/relations/{slug}/versions/{n}/reproduce`);
		const problem = await refused.json();
		expect(problem).toMatchObject({ code: 'sign-in-to-reproduce' });
		expect(problem.detail).toContain('200 bootstrap resamples over 40 calibrators');
		expect(problem.detail).toContain('fewer than 200 resamples');

		const t1 = performance.now();
		const withToken = await request.post(path, { headers: bearer(plainToken) });
		console.log(`token reproduction, 200 resamples × 40 calibrators: ${(performance.now() - t1).toFixed(0)} ms`);
		expect(withToken.status()).toBe(200);
		expect(await withToken.json()).toMatchObject({ digest_matches: true, digest: over.versions[0].digest });
	});

	test('the version page’s Reproduce button says to sign in, and reproduces once signed in', async ({ browser }) => {
		const anonymous = await browser.newPage();
		await anonymous.goto(`/relations/${over.slug}/versions/1`);
		await anonymous.getByTestId('reproduce-button').click();
		await expect(anonymous.getByText('without signing in (or an API token) a reproduction is limited')).toBeVisible();
		await anonymous.close();

		const context = await browser.newContext();
		await context.addCookies([{ name: 'candlebook_session', value: sessionCookie, url: origin }]);
		const signedIn = await context.newPage();
		await signedIn.goto(`/relations/${over.slug}/versions/1`);
		await signedIn.getByTestId('reproduce-button').click();
		await expect(signedIn.getByTestId('reproduce-result')).toContainText(
			'Reproduced: the refit gives the same digest.'
		);
		await context.close();
	});
});

test.describe('a visitor’s form post is at most 16 KiB', () => {
	const form = (bytes: number) => {
		const head = 'email=nobody%40browser.test&next=%2F&password=';
		return head + 'x'.repeat(bytes - head.length);
	};
	const post = (body: BodyInit, headers: Record<string, string> = {}) =>
		fetch(`${origin}/sign-in`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded', origin, ...headers },
			body,
			redirect: 'manual'
		});

	/**
	 * Offers a large body 4 KiB at a time, a few milliseconds apart, and stops once the server has
	 * answered: the server closes the connection after a 413, so the rest of the upload has nowhere to go.
	 */
	function offer(headers: Record<string, string>, chunks: number) {
		const chunk = 'x'.repeat(4096);
		return new Promise<{ status: number; body: string; written: number }>((resolve, reject) => {
			let written = 0;
			let answered = false;
			const outgoing = httpRequest(
				`${origin}/sign-in`,
				{
					method: 'POST',
					headers: { 'content-type': 'application/x-www-form-urlencoded', origin, ...headers }
				},
				(response) => {
					answered = true;
					const at = written;
					let body = '';
					response.setEncoding('utf8');
					response.on('data', (text: string) => (body += text));
					response.on('end', () => resolve({ status: response.statusCode ?? 0, body, written: at }));
				}
			);
			outgoing.on('error', (error) => (answered ? undefined : reject(error)));
			outgoing.write('email=a%40b.test&password=');
			const next = () => {
				if (answered) return;
				if (written === chunks) return void outgoing.end();
				written++;
				outgoing.write(chunk);
				setTimeout(next, 5);
			};
			next();
		});
	}

	test('16 384 bytes reach the sign-in action; 16 385 answer 413; the server stays up', async () => {
		const t0 = performance.now();
		const atLimit = await post(form(16 * 1024));
		expect(atLimit.status).not.toBe(413);
		// The sign-in action read the form: it echoes the address back with its refusal.
		expect(await atLimit.text()).toContain('nobody@browser.test');
		const over = await post(form(16 * 1024 + 1));
		expect(over.status).toBe(413);
		expect(await over.text()).toContain('more than 16 KiB');
		// An 8 MiB body announced by Content-Length is refused before its first bytes are read.
		const huge = await offer({ 'content-length': String(8 * 1024 * 1024 + 26) }, 2048);
		expect(huge.status).toBe(413);
		expect(huge.written).toBeLessThan(8);
		console.log(`visitor form limit, three posts: ${(performance.now() - t0).toFixed(0)} ms`);
		expect((await fetch(`${origin}/healthz`)).status).toBe(200);
		expect((await fetch(`${origin}/sign-in`)).status).toBe(200);
	});

	test('a chunked body without Content-Length is answered 413 once it passes 16 KiB', async () => {
		const answer = await offer({ 'transfer-encoding': 'chunked' }, 2048);
		expect(answer.status).toBe(413);
		expect(answer.body).toContain('more than 16 KiB');
		// 2048 chunks of 4 KiB (8 MiB) were offered; the answer came after about 16 KiB of them.
		expect(answer.written).toBeLessThan(64);
		console.log(`chunked visitor post answered 413 after ${answer.written} of 2048 chunks of 4 KiB`);
		expect((await fetch(`${origin}/healthz`)).status).toBe(200);
	});

	test('a signed-in person’s form is not held to the visitor limit', async () => {
		const response = await post(form(64 * 1024), { cookie: `candlebook_session=${sessionCookie}` });
		expect(response.status).not.toBe(413);
	});
});

test.describe('NUL, lone surrogates and U+FFFE/U+FFFF in uploads answer 422 by cell or JSON path', () => {
	const CSV = (star: string) =>
		[
			'star,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
			'Invented Alpha,classical_fundamental,5.1,21.0,0.02,18.5,0.03',
			`${star},classical_fundamental,8.3,20.2,0.02,18.5,0.03`
		].join('\n');

	test('a calibrator CSV with a NUL or U+FFFE in a cell: 422 naming line 3, column star', async ({ request }) => {
		const set = uniqueSlug('hostile-set');
		const created = await request.post('/api/v1/calibrator-sets', {
			headers: bearer(curatorToken),
			data: { slug: set, title: 'Hostile characters', group, licence: 'CC0-1.0' }
		});
		expect(created.status()).toBe(201);
		for (const char of ['\u0000', '\uFFFE', '\u0007']) {
			const response = await request.post(`/api/v1/calibrator-sets/${set}/revisions?name=hostile.csv`, {
				headers: { ...bearer(curatorToken), 'content-type': 'text/csv' },
				data: Buffer.from(CSV(`Invented ${char}Beta`), 'utf8')
			});
			expect(response.status(), await response.text()).toBe(422);
			expect(response.headers()['content-type']).toContain('application/problem+json');
			const problem = await response.json();
			expect(problem.issues).toEqual([
				expect.objectContaining({ line: 3, column: 'star', reason: expect.stringContaining('does not store') })
			]);
		}
		const named = await request.post(
			`/api/v1/calibrator-sets/${set}/revisions?name=${encodeURIComponent('a\u0000.csv')}`,
			{
				headers: { ...bearer(curatorToken), 'content-type': 'text/csv' },
				data: CSV('Invented Beta')
			}
		);
		expect(named.status(), await named.text()).toBe(422);
		expect((await named.json()).errors).toEqual([expect.objectContaining({ path: 'name' })]);
	});

	test('a light-curve upload with a NUL in a cell: 422 naming the line and column', async ({ request }) => {
		const rows = Array.from(
			{ length: 12 },
			(_, i) => `${(50000 + i * 0.41).toFixed(3)},${(12 + Math.sin(i)).toFixed(3)},0.01`
		);
		rows[2] = `50000.820,12.${'\u0000'}5,0.01`;
		const response = await request.post(
			'/api/v1/light-curves/uploads?time_reference=MJD&time_offset_days=0&star=Invented%20Cep&band=V&name=hostile.csv',
			{
				headers: { ...bearer(curatorToken), 'content-type': 'text/csv' },
				data: Buffer.from(['time,magnitude,error', ...rows].join('\n'))
			}
		);
		expect(response.status(), await response.text()).toBe(422);
		const problem = await response.json();
		expect(problem.issues).toEqual([
			expect.objectContaining({ line: 4, column: 'magnitude', reason: expect.stringContaining('U+0000') })
		]);
		const named = await request.post(
			`/api/v1/light-curves/uploads?time_reference=MJD&time_offset_days=0&star=Invented%20Cep&band=V&name=${encodeURIComponent('x\uFFFF.csv')}`,
			{ headers: { ...bearer(curatorToken), 'content-type': 'text/csv' }, data: 'time,magnitude,error\n1,2,0.1' }
		);
		expect(named.status(), await named.text()).toBe(422);
		expect((await named.json()).errors).toEqual([expect.objectContaining({ path: 'name' })]);
	});

	// Lone surrogates reach a server only as JSON escapes (UTF-8 bytes cannot carry them).
	const raw = (json: string) => ({ headers: { 'content-type': 'application/json' }, data: Buffer.from(json, 'utf8') });

	test('a star name in POST /api/v1/distances with a lone surrogate or NUL: 422 naming stars/1/id', async ({
		request
	}) => {
		const star = (id: string) => `{"id":"${id}","period_days":10,"mean_mag":25,"mean_mag_err":0.05}`;
		for (const id of ['Invented \\ud800', 'Invented \\u0000', 'Invented \\uffff']) {
			const response = await request.post(
				'/api/v1/distances',
				raw(`{"relation":"${under.slug}@1","stars":[${star('Invented A')},${star(id)}]}`)
			);
			expect(response.status(), await response.text()).toBe(422);
			await expectMatchesOpenApi(request, response, 'POST /api/v1/distances');
			expect((await response.json()).errors).toEqual([
				expect.objectContaining({ path: 'stars/1/id', message: expect.stringContaining('does not store') })
			]);
		}
	});

	test('a proposal rationale with a lone low surrogate: 422 naming rationale, nothing stored', async ({ request }) => {
		const response = await request.post(`/api/v1/relations/${under.slug}/proposals`, {
			headers: { ...bearer(curatorToken), 'content-type': 'application/json' },
			data: Buffer.from(
				`{"fit":"00000000-0000-4000-8000-000000000000","title":"Hostile","rationale":"half a pair \\udc00 here","submit":false}`
			)
		});
		expect(response.status(), await response.text()).toBe(422);
		expect((await response.json()).errors).toEqual([
			expect.objectContaining({ path: 'rationale', message: expect.stringContaining('U+DC00') })
		]);
	});
});

test('the export archive is addressed by its content: the same ETag and bytes twice, 304 when the client has it', async ({
	request
}) => {
	const t0 = performance.now();
	const first = await request.get('/api/v1/export');
	const t1 = performance.now();
	const second = await request.get('/api/v1/export');
	const t2 = performance.now();
	console.log(`GET /api/v1/export: first ${(t1 - t0).toFixed(0)} ms, again ${(t2 - t1).toFixed(0)} ms`);
	expect(first.status()).toBe(200);
	const etag = first.headers()['etag'];
	expect(etag).toMatch(/^"sha256-[0-9a-f]{64}"$/);
	expect(second.headers()['etag']).toBe(etag);
	expect(Buffer.compare(await first.body(), await second.body())).toBe(0);
	const unchanged = await request.get('/api/v1/export', { headers: { 'if-none-match': etag } });
	expect(unchanged.status()).toBe(304);
	await expectMatchesOpenApi(request, unchanged, 'GET /api/v1/export');
});
