import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { hasReferenceData, missingReason, readReferenceFile } from '../support/reference-data';
import { createBearerToken, createPerson, createSessionCookie, openOrm } from './support/accounts';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * Light curves over HTTP against the production build: the analyse endpoint (now and as a job), the
 * upload endpoint, and the pages that draw the periodogram and the phased curve.
 *
 * Light curves: OGLE-III I band (Soszyński et al. 2008, AcA 58, 163), read in place from the reference
 * data (columns HJD − 2450000, I, error). Catalogue periods: OGLE-IV Collection of Variable Stars
 * (Soszyński et al. 2015, AcA 65, 297), as listed in the reference-data README. Period tolerance as in
 * the engine's own test: 3σ of the reported error, or 2% of the peak width P²/T when larger (the
 * catalogue periods come from later seasons and Cepheid periods drift).
 */
const CEPHEIDS = [
	{ name: 'OGLE-LMC-CEP-0002', periodDays: 3.118149 },
	{ name: 'OGLE-LMC-CEP-0005', periodDays: 5.6119491 },
	{ name: 'OGLE-LMC-CEP-0227', periodDays: 3.7970782 },
	{ name: 'OGLE-LMC-CEP-0674', periodDays: 4.952988 },
	{ name: 'OGLE-SMC-CEP-0668', periodDays: 8.0605223 }
];
const RR_LYRAE = 'OGLE-BLG-RRLYR-02924';
const ANALYSE = 'POST /api/v1/light-curves/analyse';

let orm: MikroORM;
let bearer: string;
let userId: string;

function ogle(name: string): number[][] {
	return readReferenceFile('light-curves', `${name}.dat`)
		.trim()
		.split('\n')
		.map((line) => line.trim().split(/\s+/).map(Number));
}

const series = (name: string, id = name) => ({
	id,
	band: 'Ic',
	time_reference: 'HJD',
	time_offset_days: 2450000,
	points: ogle(name)
});

type Result = {
	id: string;
	period_days: number;
	period_err_days: number;
	baseline_days: number;
	warnings: { code: string }[];
};

function expectCataloguePeriod(result: Result, periodDays: number) {
	const tolerance = Math.max(3 * result.period_err_days, (0.02 * result.period_days ** 2) / result.baseline_days);
	expect(
		Math.abs(result.period_days - periodDays),
		`${result.id}: ${result.period_days} vs ${periodDays}`
	).toBeLessThanOrEqual(tolerance);
}

const auth = () => ({ authorization: `Bearer ${bearer}` });

async function pollJob(request: APIRequestContext, location: string) {
	const progress: number[] = [];
	for (let i = 0; i < 240; i++) {
		const response = await request.get(location, { headers: auth() });
		expect(response.status()).toBe(200);
		const job = await response.json();
		progress.push(job.progress);
		if (job.state === 'succeeded' || job.state === 'failed') return { job, progress };
		await new Promise((resolve) => setTimeout(resolve, 150));
	}
	throw new Error(`job ${location} did not finish`);
}

test.describe('light curves', () => {
	test.skip(!hasReferenceData('light-curves'), missingReason('light-curves'));

	test.beforeAll(async () => {
		orm = await openOrm();
		const person = await createPerson(orm, { label: 'light-curve observer', roles: ['reader'] });
		userId = person.id;
		bearer = await createBearerToken(orm, person.id, ['write']);
	});

	test.afterAll(async () => {
		await orm?.close(true);
	});

	test('OGLE Cepheids analysed over HTTP match their catalogue periods; the RR Lyrae star is flagged', async ({
		request
	}) => {
		const response = await request.post('/api/v1/light-curves/analyse', {
			headers: auth(),
			data: { series: [...CEPHEIDS.map((star) => series(star.name)), series(RR_LYRAE)] }
		});
		expect(response.status()).toBe(200);
		await expectMatchesOpenApi(request, response, ANALYSE);
		const { results } = (await response.json()) as { results: Result[] };
		expect(results.map((result) => result.id)).toEqual([...CEPHEIDS.map((star) => star.name), RR_LYRAE]);
		CEPHEIDS.forEach((star, i) => {
			expectCataloguePeriod(results[i], star.periodDays);
			expect(results[i].warnings.map((warning) => warning.code)).not.toContain('period_below_rr_lyrae_limit');
		});
		expect(results[5].period_days).toBeLessThan(1);
		expect(results[5].warnings.map((warning) => warning.code)).toContain('period_below_rr_lyrae_limit');
	});

	test('a bad point is refused with its path; anonymous callers, other media types and huge bodies are refused', async ({
		request
	}) => {
		const bad = series(CEPHEIDS[0].name);
		bad.points[17][2] = -0.01;
		const refused = await request.post('/api/v1/light-curves/analyse', {
			headers: auth(),
			data: { series: [series(CEPHEIDS[1].name), bad] }
		});
		expect(refused.status()).toBe(422);
		await expectMatchesOpenApi(request, refused, ANALYSE);
		expect((await refused.json()).errors).toEqual([
			{ path: 'series[1].points[17][2]', message: 'must be > 0 (the error sets the weight)' }
		]);

		const anonymous = await request.post('/api/v1/light-curves/analyse', { data: { series: [] } });
		expect(anonymous.status()).toBe(401);

		const text = await request.post('/api/v1/light-curves/analyse', {
			headers: { ...auth(), 'content-type': 'application/xml' },
			data: '<series/>'
		});
		expect(text.status()).toBe(415);
		await expectMatchesOpenApi(request, text, ANALYSE);

		const huge = await request.post('/api/v1/light-curves/analyse', {
			headers: { ...auth(), 'content-type': 'application/json' },
			data: `{"series":[${'0,'.repeat(4_500_000)}0]}`
		});
		expect(huge.status()).toBe(413);
		await expectMatchesOpenApi(request, huge, ANALYSE);
	});

	test('more than ten series answer 202 with a job whose progress rises per series to the results', async ({
		request
	}) => {
		const batch = Array.from({ length: 11 }, (_, i) => {
			const star = CEPHEIDS[i % CEPHEIDS.length];
			return { ...series(star.name, `${star.name}-copy-${i}`), catalogue: star.periodDays };
		});
		const response = await request.post('/api/v1/light-curves/analyse', {
			headers: auth(),
			data: { series: batch.map(({ catalogue: _catalogue, ...entry }) => entry) }
		});
		expect(response.status()).toBe(202);
		await expectMatchesOpenApi(request, response, ANALYSE);
		const location = response.headers()['location'];
		expect(location).toMatch(/^\/api\/v1\/jobs\/[0-9a-f-]{36}$/);
		const { job, progress } = await pollJob(request, location);
		expect(job.state).toBe('succeeded');
		expect(progress).toEqual([...progress].sort((a, b) => a - b));
		expect(progress.some((value) => value > 0.05 && value < 0.95)).toBe(true);
		const results = job.result.results as Result[];
		expect(results.map((result) => result.id)).toEqual(batch.map((entry) => entry.id));
		results.forEach((result, i) => expectCataloguePeriod(result, batch[i].catalogue));
	});

	test('an uploaded file is analysed in the background; its pages draw the periodogram and the phased curve', async ({
		request,
		page,
		baseURL
	}) => {
		const stars = [CEPHEIDS[0].name, CEPHEIDS[3].name];
		const tsv = [
			'star\ttime\tmagnitude\terror',
			...stars.flatMap((name) => ogle(name).map((point) => [name, ...point].join('\t')))
		].join('\n');
		const created = await request.post(
			'/api/v1/light-curves/uploads?time_reference=HJD&time_offset_days=2450000&band=Ic&name=ogle-two-stars.tsv',
			{ headers: { ...auth(), 'content-type': 'text/tab-separated-values' }, data: tsv }
		);
		expect(created.status()).toBe(201);
		await expectMatchesOpenApi(request, created, 'POST /api/v1/light-curves/uploads');
		const upload = await created.json();
		expect(upload.series).toEqual(stars.map((star) => ({ star, band: 'Ic', points: ogle(star).length })));

		await page
			.context()
			.addCookies([{ name: 'candlebook_session', value: await createSessionCookie(orm, userId), url: baseURL! }]);
		await page.goto(`/light-curves/${upload.id}`);
		// The page polls the job and shows the table once every star is done.
		const table = page.getByTestId('light-curve-results');
		await expect(table).toBeVisible({ timeout: 20_000 });
		await expect(table.getByRole('row')).toHaveCount(3);

		const read = await request.get(`/api/v1/light-curves/uploads/${upload.id}`, { headers: auth() });
		await expectMatchesOpenApi(request, read, 'GET /api/v1/light-curves/uploads/{id}');
		const stored = (await read.json()).results as Result[];
		expectCataloguePeriod(stored[0], CEPHEIDS[0].periodDays);
		expectCataloguePeriod(stored[1], CEPHEIDS[3].periodDays);

		await table.getByRole('link', { name: stars[1] }).click();
		await expect(page.getByRole('heading', { level: 1 })).toHaveText(stars[1]);
		await expect(page.getByTestId('periodogram-Ic').locator('svg[role="img"]')).toBeVisible();
		await expect(page.getByTestId('phased-Ic').locator('svg[role="img"]')).toBeVisible();
		// The folded points and the model are drawn: one dot per point per cycle shown (two cycles).
		await expect(page.getByTestId('phased-Ic').locator('circle')).toHaveCount(2 * ogle(stars[1]).length);

		await page.goto('/light-curves');
		await expect(page.getByTestId('upload-list').getByRole('link', { name: 'ogle-two-stars.tsv' })).toBeVisible();
	});

	test('the upload form works without scripts and shows a refused file’s problems by line and column', async ({
		browser,
		baseURL
	}) => {
		const context = await browser.newContext({ javaScriptEnabled: false });
		await context.addCookies([
			{ name: 'candlebook_session', value: await createSessionCookie(orm, userId), url: baseURL! }
		]);
		const page = await context.newPage();
		const lines = ['time,magnitude,error', ...ogle(CEPHEIDS[2].name).map((point) => point.join(','))];
		await page.goto('/light-curves');
		await page
			.getByLabel('File', { exact: true })
			.setInputFiles({ name: 'cep-0227.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n')) });
		await page.getByLabel('Time offset (days)').fill('2450000');
		await page.getByLabel('Star (files without a star column)').fill(CEPHEIDS[2].name);
		await page.getByLabel('Band (files without a band column)').fill('Ic');
		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		await expect(page).toHaveURL(/\/light-curves\/[0-9a-f-]{36}$/);
		await expect(page.getByRole('heading', { level: 1 })).toHaveText('cep-0227.csv');

		lines[5] = lines[5].replace(/,[^,]+$/, ',-0.02');
		await page.goto('/light-curves');
		await page
			.getByLabel('File', { exact: true })
			.setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n')) });
		await page.getByLabel('Star (files without a star column)').fill(CEPHEIDS[2].name);
		await page.getByRole('button', { name: 'Upload and analyse' }).click();
		const issues = page.getByTestId('upload-issues');
		await expect(issues).toContainText('error');
		await expect(issues.getByRole('row').nth(1)).toContainText('6');
		await expect(issues).toContainText('must be positive');
		await context.close();
	});
});
