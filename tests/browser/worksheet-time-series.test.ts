import { readFileSync } from 'node:fs';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import type { Relation } from '../../src/lib/calibration/index';
import { pinPublishedRelation } from '../support/pinned-relation';
import { createPerson, createSessionCookie, openOrm, uniqueSlug } from './support/accounts';

/**
 * The worksheet's "start from raw time series" step in Chromium, against the real analyse endpoint:
 * invented photometry of a host galaxy's Cepheids goes in, the host table fills with periods and
 * intensity-mean magnitudes, and those flow on to the combined distance and its exports. The series
 * are synthetic: a sinusoid plus its first harmonic at a period the test chooses, with Gaussian noise.
 */
const invented: Relation = {
	bandId: 'Ic',
	population: 'classical_fundamental',
	magnitudeSystem: 'Vega',
	coefficients: { zeroPoint: -4.78, slope: -2.96, metallicityTerm: null },
	pivotLogPeriod: 1,
	pivotFeh: 0,
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.02 ** 2, 0.00001],
			[0.00001, 0.05 ** 2]
		]
	},
	intrinsicScatter: 0.1,
	validity: { logPeriodMin: 0.4, logPeriodMax: 1.8, fehMin: null, fehMax: null },
	extinctionLaw: null,
	rV: null
};
const HOST_MU = 28.7;
const TIME_OFFSET = 2450000;
const NOISE = 0.02;

/** mulberry32 (common practice: a small seeded generator), so every run sees the same photometry. */
function random(seed: number) {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = Math.imul(a ^ (a >>> 15), 1 | a);
		t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** The light-curve shape about its level: a sinusoid and its first harmonic (an asymmetric Cepheid-like curve). */
const shape = (phase: number) => 0.3 * Math.sin(2 * Math.PI * phase) + 0.1 * Math.sin(4 * Math.PI * phase + 0.9);
/**
 * Intensity mean of the shape, −2.5 log10 ⟨10^(−0.4 m)⟩ over one cycle (the mean a PL relation takes;
 * common practice), by a 20 000-step sum: about −0.024 mag, ten times the fit's error of a mean, so a
 * table filled with magnitude means would miss the expected values below.
 */
const SHAPE_INTENSITY_MEAN = (() => {
	let sum = 0;
	for (let k = 0; k < 20_000; k++) sum += 10 ** (-0.4 * shape(k / 20_000));
	return -2.5 * Math.log10(sum / 20_000);
})();

interface Star {
	id: string;
	periodDays: number;
	/** Intensity-mean magnitude the series was built to have: μ + M(P) on the pinned relation. */
	meanMag: number;
	rows: string[];
}

/** 70 points over about a year, 1 to 9 days apart, with N(0, 0.02) noise (Box–Muller, common practice). */
function syntheticStar(id: string, periodDays: number, seed: number): Star {
	const next = random(seed);
	const { zeroPoint, slope } = invented.coefficients;
	const meanMag = HOST_MU + zeroPoint + slope * (Math.log10(periodDays) - invented.pivotLogPeriod);
	const level = meanMag - SHAPE_INTENSITY_MEAN;
	const rows: string[] = [];
	let t = 5000 + 10 * next();
	for (let k = 0; k < 70; k++) {
		t += 1 + 8 * next();
		const gauss = Math.sqrt(-2 * Math.log(1 - next())) * Math.cos(2 * Math.PI * next());
		rows.push(`${id},${t.toFixed(5)},${(level + shape(t / periodDays) + NOISE * gauss).toFixed(4)},${NOISE},Ic`);
	}
	return { id, periodDays, meanMag, rows };
}

const timeSeriesCsv = (stars: readonly Star[]) =>
	['star,time,mag,err,band', ...stars.flatMap((star) => star.rows)].join('\n') + '\n';

/** The analyse request the file stands for, built from the same text the page reads. */
const analyseBody = (stars: readonly Star[]) => ({
	series: stars.map((star) => ({
		id: star.id,
		band: 'Ic',
		time_reference: 'HJD',
		time_offset_days: TIME_OFFSET,
		points: star.rows.map((row) => row.split(',').slice(1, 4).map(Number))
	}))
});

type Analysed = {
	id: string;
	period_days: number;
	period_err_days: number;
	mean_mag_intensity: number;
	mean_mag_intensity_err: number;
};

/**
 * Injected period within 3× the reported error: the series are exactly the fitted model plus Gaussian
 * noise, so the error is a true 1σ (3σ holds 99.7%, and the data are fixed, so this cannot flake). The
 * error itself must be under 0.1% of P, so the tolerance is tight enough to catch an alias or a
 * harmonic. The intensity mean likewise within 3× its reported error.
 */
function expectInjected(result: Analysed, star: Star) {
	expect(result.period_err_days / star.periodDays, `${star.id}: period error`).toBeLessThan(1e-3);
	expect(Math.abs(result.period_days - star.periodDays), `${star.id}: ${result.period_days} d`).toBeLessThanOrEqual(
		3 * result.period_err_days
	);
	expect(Math.abs(result.mean_mag_intensity - star.meanMag), `${star.id}: mean`).toBeLessThanOrEqual(
		3 * result.mean_mag_intensity_err
	);
}

/** The host table's cells as the page shows them, by star id. */
async function hostTable(page: Page) {
	const text = await page.getByLabel('…or paste it').inputValue();
	const [header, ...rows] = text.trim().split('\n');
	expect(header).toBe('id,period_days,mean_mag,mean_mag_err,ebv,ebv_err,feh,feh_err');
	return rows.map((row) => row.split(','));
}

/** The host table holds exactly the direct answer's numbers, written so they read back as the same doubles. */
function expectTableFrom(rows: string[][], results: readonly Analysed[]) {
	expect(rows.map((row) => row[0])).toEqual(results.map((result) => result.id));
	rows.forEach((row, i) => {
		expect(row.slice(1, 4)).toEqual([
			String(results[i].period_days),
			String(results[i].mean_mag_intensity),
			String(results[i].mean_mag_intensity_err)
		]);
		expect(row.slice(1, 4).map(Number)).toEqual([
			results[i].period_days,
			results[i].mean_mag_intensity,
			results[i].mean_mag_intensity_err
		]);
	});
}

async function pollJob(request: APIRequestContext, location: string): Promise<Analysed[]> {
	for (let i = 0; i < 300; i++) {
		const job = await (await request.get(location)).json();
		if (job.state === 'succeeded') return job.result.results;
		if (job.state === 'failed') throw new Error(`job ${location} failed: ${JSON.stringify(job.error)}`);
		await new Promise((resolve) => setTimeout(resolve, 200));
	}
	throw new Error(`job ${location} did not finish`);
}

let orm: MikroORM;
let pinned: { ref: string; digest: string };
let userId: string;
const suffix = crypto.randomUUID().slice(0, 6);

test.beforeAll(async () => {
	orm = await openOrm();
	pinned = await pinPublishedRelation(orm, {
		slug: uniqueSlug('worksheet-raw-ic'),
		title: 'Invented Ic relation for the raw time-series test',
		relation: invented
	});
	userId = (await createPerson(orm, { label: 'worksheet photometrist', roles: ['reader'] })).id;
});
test.afterAll(async () => {
	await orm?.close(true);
});

async function openStep(page: Page, baseURL: string) {
	await page
		.context()
		.addCookies([{ name: 'candlebook_session', value: await createSessionCookie(orm, userId), url: baseURL }]);
	await page.goto('/worksheet');
	await expect(page.getByTestId('worksheet-form')).toHaveAttribute('data-hydrated', 'true');
	await page.getByLabel('Current public versions').selectOption(pinned.ref);
	await page.getByText('Start from raw time series').click();
	const step = page.getByTestId('light-curve-step');
	await step.getByLabel('Time reference').selectOption('HJD');
	await step.getByLabel('Time offset (days)').fill(String(TIME_OFFSET));
	return step;
}

test('raw time series fill the host table with what the analyse endpoint answers, and flow on to the distance and its exports', async ({
	page,
	baseURL
}) => {
	const stars = [5.37, 9.12, 16.8, 31.4].map((period, i) => syntheticStar(`WS-${suffix}-${i + 1}`, period, 1000 + i));
	const step = await openStep(page, baseURL!);
	// The same series straight to the endpoint, as the same signed-in person.
	const body = analyseBody(stars);
	const direct = await page.request.post('/api/v1/light-curves/analyse', { data: body });
	expect(direct.status()).toBe(200);
	const results = (await direct.json()).results as Analysed[];
	stars.forEach((star, i) => expectInjected(results[i], star));

	await step
		.getByLabel('Upload a time series')
		.setInputFiles({ name: 'host-photometry.csv', mimeType: 'text/csv', buffer: Buffer.from(timeSeriesCsv(stars)) });
	const sent = page.waitForRequest((request) => request.url().endsWith('/api/v1/light-curves/analyse'));
	await step.getByRole('button', { name: 'Find periods and fill the host table' }).click();
	// The page sends what the test sent for the same file.
	expect((await sent).postDataJSON()).toEqual(body);
	await expect(page.getByLabel('…or paste it')).toHaveValue(new RegExp(`^id,period_days[^]*${stars[3].id}`));
	const table = await hostTable(page);
	expectTableFrom(table, results);

	// The distance the page shows and exports is the distances endpoint's for the filled table.
	const hostStars = results.map((result) => ({
		id: result.id,
		period_days: result.period_days,
		mean_mag: result.mean_mag_intensity,
		mean_mag_err: result.mean_mag_intensity_err,
		ebv: null,
		ebv_err: null,
		feh: null,
		feh_err: null
	}));
	const distances = await (
		await page.request.post('/api/v1/distances', { data: { relation: pinned.ref, stars: hostStars } })
	).json();
	expect(distances.combined.n_used).toBe(4);
	// The series were built at μ = 28.7 on this relation: a wrong period or mean would move μ0 by far more.
	expect(Math.abs(distances.combined.mu0 - HOST_MU)).toBeLessThan(3 * distances.combined.mu0_err_stat);
	await page.getByRole('button', { name: 'Compute distances' }).click();
	await expect(page.getByTestId('combined-mu0')).toContainText(
		`${distances.combined.mu0.toFixed(3)} ± ${distances.combined.mu0_err_stat.toFixed(3)} (stat)`
	);
	await expect(page.getByTestId('star-results').locator('tbody tr')).toHaveCount(4);

	const json = page.waitForEvent('download');
	await page.getByRole('button', { name: 'Export JSON' }).click();
	const record = JSON.parse(readFileSync((await (await json).path())!, 'utf8'));
	expect(record.relation).toEqual({ ref: pinned.ref, digest: pinned.digest });
	expect(record.inputs.distances.stars).toEqual(hostStars);
	expect(record.distances.combined.mu0).toBe(distances.combined.mu0);

	const csv = page.waitForEvent('download');
	await page.getByRole('button', { name: 'Export CSV' }).click();
	const text = readFileSync((await (await csv).path())!, 'utf8');
	expect(text).toContain(`# relation: ${pinned.ref}\n# relation_digest: ${pinned.digest}\n`);
	const exported = text.split('\n').filter((line) => line.startsWith(`WS-${suffix}-`));
	expect(exported.map((line) => line.split(',').slice(0, 4))).toEqual(table.map((row) => row.slice(0, 4)));
});

test('eleven stars become a job; the step waits for it and fills the table with its results', async ({
	page,
	baseURL
}) => {
	const periods = [3.21, 4.05, 5.37, 6.66, 9.12, 11.9, 16.8, 21.3, 27.7, 31.4, 44.6];
	const stars = periods.map((period, i) => syntheticStar(`WJ-${suffix}-${i + 1}`, period, 2000 + i));
	const step = await openStep(page, baseURL!);
	await step.getByLabel('…or paste the time series').fill(timeSeriesCsv(stars));
	const answered = page.waitForResponse((response) => response.url().endsWith('/api/v1/light-curves/analyse'));
	await step.getByRole('button', { name: 'Find periods and fill the host table' }).click();
	expect((await answered).status()).toBe(202);
	await expect(page.getByLabel('…or paste it')).toHaveValue(new RegExp(`${stars[10].id},`), { timeout: 60_000 });

	const direct = await page.request.post('/api/v1/light-curves/analyse', { data: analyseBody(stars) });
	expect(direct.status()).toBe(202);
	const results = await pollJob(page.request, direct.headers()['location']);
	stars.forEach((star, i) => expectInjected(results[i], star));
	expectTableFrom(await hostTable(page), results);
});

test('a bad time-series file is refused in the step by line, column, value and reason, before any analysis', async ({
	page,
	baseURL
}) => {
	const star = syntheticStar(`WB-${suffix}-1`, 7.3, 3000);
	const lines = timeSeriesCsv([star]).split('\n');
	lines[5] = lines[5].replace(/,0\.02,Ic$/, ',-0.02,Ic');
	lines[8] = lines[8].replace(/^([^,]+,[^,]+),[^,]+,/, '$1,abc,');
	lines[11] = lines[11].replace(/,Ic$/, ',I');
	const analyseCalls: string[] = [];
	page.on('request', (request) => {
		if (request.url().endsWith('/api/v1/light-curves/analyse')) analyseCalls.push(request.method());
	});
	const step = await openStep(page, baseURL!);
	await step
		.getByLabel('Upload a time series')
		.setInputFiles({ name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n')) });
	await step.getByRole('button', { name: 'Find periods and fill the host table' }).click();
	const rows = step.getByTestId('csv-errors').locator('tbody tr');
	await expect(rows).toHaveCount(3);
	await expect(rows.nth(0)).toHaveText(/^6\s*err\s*-0\.02\s*must be greater than 0$/);
	await expect(rows.nth(1)).toHaveText(/^9\s*mag\s*abc\s*is not a number$/);
	await expect(rows.nth(2)).toHaveText(/^12\s*band\s*I\s*is not a single band \(B, V, Rc, Ic, /);
	expect(analyseCalls).toEqual([]);
	await expect(page.getByLabel('…or paste it')).toHaveValue('');
});

test('visitors are asked to sign in for the raw time-series step', async ({ page }) => {
	await page.goto('/worksheet');
	await expect(page.getByTestId('worksheet-form')).toHaveAttribute('data-hydrated', 'true');
	await page.getByText('Start from raw time series').click();
	const step = page.locator('details', { hasText: 'Start from raw time series' });
	await expect(step.getByRole('link', { name: 'Sign in' })).toBeVisible();
	await expect(page.getByTestId('light-curve-step')).toHaveCount(0);
});
