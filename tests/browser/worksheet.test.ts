import { readFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type Page } from '@playwright/test';
import {
	applyRelation,
	combineHostDistance,
	distanceFromModulus,
	type Relation
} from '../../src/lib/calibration/index';
import { pinPublishedRelation } from '../support/pinned-relation';
import { hasReferenceData, readReferenceFile } from '../support/reference-data';
import { openOrm, uniqueSlug } from './support/accounts';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * The worksheet from CSV to H0, with and without JavaScript, and POST /api/v1/distances over HTTP.
 * The relation is an invented W_VI relation pinned for the test; the host is invented too.
 */
const invented: Relation = {
	bandId: 'W_VI',
	population: 'classical_fundamental',
	magnitudeSystem: 'Vega',
	coefficients: { zeroPoint: -5.95, slope: -3.31, metallicityTerm: null },
	pivotLogPeriod: 1,
	pivotFeh: 0,
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.015 ** 2, 0.00002],
			[0.00002, 0.04 ** 2]
		]
	},
	intrinsicScatter: 0.08,
	validity: { logPeriodMin: 0.4, logPeriodMax: 1.8, fehMin: null, fehMax: null },
	extinctionLaw: null,
	rV: null
};
const HOST_MU = 29.3;

/** 30 invented Cepheids at μ = 29.3: deterministic noise, one 1.5 mag outlier, one star beyond the validity range. */
function inventedHost() {
	let state = 20261201;
	const uniform = () => {
		state = (state * 1103515245 + 12345) % 2147483648;
		return (state + 0.5) / 2147483648;
	};
	return Array.from({ length: 30 }, (_, i) => {
		const logP = i === 29 ? 2.1 : 0.6 + 1.1 * uniform();
		const noise = (uniform() + uniform() + uniform() - 1.5) * 0.15;
		const mag = HOST_MU + invented.coefficients.zeroPoint + invented.coefficients.slope * (logP - 1) + noise;
		return {
			id: `LK-${String(i + 1).padStart(3, '0')} (invented)`,
			period_days: Number((10 ** logP).toFixed(4)),
			mean_mag: Number((mag + (i === 7 ? 1.5 : 0)).toFixed(3)),
			mean_mag_err: 0.05
		};
	});
}
const stars = inventedHost();
const csv =
	'id,period_days,mean_mag,mean_mag_err,ebv,ebv_err,feh,feh_err\n' +
	stars.map((s) => `${s.id},${s.period_days},${s.mean_mag},${s.mean_mag_err},,,,`).join('\n') +
	'\n';
/** What the engine itself says (applyRelation + combineHostDistance), independently of the endpoint. */
const expected = combineHostDistance(
	invented,
	applyRelation(
		invented,
		stars.map((s) => ({ id: s.id, periodDays: s.period_days, mag: s.mean_mag, magErr: s.mean_mag_err }))
	).stars
);
const VELOCITY = 2100;

const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
let orm: MikroORM;
let pinned: { ref: string; digest: string };

test.beforeAll(async () => {
	orm = await openOrm();
	pinned = await pinPublishedRelation(orm, {
		slug: uniqueSlug('worksheet-w-vi'),
		title: 'Invented W_VI relation for the worksheet test',
		relation: invented
	});
});
test.afterAll(async () => {
	await orm?.close(true);
});

async function fillHost(page: Page, how: 'paste' | 'upload') {
	await page.goto('/worksheet');
	if (how === 'upload') await expect(page.getByTestId('worksheet-form')).toHaveAttribute('data-hydrated', 'true');
	await page.getByLabel('Current public versions').selectOption(pinned.ref);
	if (how === 'paste') await page.getByLabel('…or paste it').fill(csv);
	else
		await page
			.getByLabel('Upload a CSV file')
			.setInputFiles({ name: 'host.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
}

async function checkDistanceAndH0(page: Page) {
	await page.getByRole('button', { name: 'Compute distances' }).click();
	const combined = page.getByTestId('combined-mu0');
	await expect(combined).toContainText(
		`${expected.mu0.value.toFixed(3)} ± ${expected.mu0.statistical.toFixed(3)} (stat)`
	);
	await expect(combined).toContainText(`± ${expected.mu0.systematic.toFixed(3)} (sys)`);
	await expect(page.getByTestId('star-results').locator('tbody tr')).toHaveCount(30);
	expect(expected.rejected.map((r) => r.star)).toContain('LK-008 (invented)');
	await expect(page.getByTestId('star-results').getByRole('row', { name: /LK-008/ })).toContainText('σ-clipped');
	await expect(page.getByRole('alert').filter({ hasText: 'Extrapolation:' })).toContainText('1 star lies outside');

	// The budget term by term (the pinned version carries no frozen systematics of its own).
	await expect(page.getByTestId('error-budget').locator('[data-term="relation_coefficients"]')).toContainText(
		`${expected.errorBudget[0].value.toFixed(4)} mag`
	);
	await expect(page.getByTestId('combined-distance-interval')).toContainText('16th–84th percentile');

	await page.getByLabel('Velocity (km/s)').fill(String(VELOCITY));
	await page.getByLabel('± (km/s)').fill('15');
	await page.getByRole('button', { name: 'Estimate H0' }).click();
	await expect(page.getByText('say in which frame the velocity or wavelength was measured')).toBeVisible();
	await page.getByLabel('Measured in the frame').selectOption('heliocentric');
	await page.getByRole('button', { name: 'Estimate H0' }).click();
	const h0 = VELOCITY / expected.distanceMpc.value;
	await expect(page.getByTestId('h0-value')).toContainText(`${h0.toFixed(1)} ±`);
	await expect(page.getByTestId('h0-budget')).toContainText(
		`peculiar velocity: ${((250 / VELOCITY) * 100).toFixed(1)}%`
	);
	await expect(
		page.getByTestId('hubble-result').getByRole('alert').filter({ hasText: 'peculiar velocity of 250 km/s' })
	).toHaveCount(1);
	await expect(page.getByTestId('hubble-result').getByRole('alert').filter({ hasText: 'is illustrative' })).toHaveCount(
		1
	);
}

async function exportJson(page: Page) {
	const download = page.waitForEvent('download');
	await page.getByRole('button', { name: 'Export JSON' }).click();
	const file = await download;
	const record = JSON.parse(readFileSync((await file.path())!, 'utf8'));
	expect(record.relation).toEqual({ ref: pinned.ref, digest: pinned.digest });
	expect(record.inputs.distances.stars).toHaveLength(30);
	expect(record.inputs.distances.stars[0]).toMatchObject({ id: stars[0].id, period_days: stars[0].period_days });
	expect(record.inputs.hubble).toMatchObject({ velocity_km_s: VELOCITY, velocity_km_s_err: 15 });
	expect(record.distances.combined.mu0).toBeCloseTo(expected.mu0.value, 10);
	expect(record.hubble.h0).toBeCloseTo(VELOCITY / expected.distanceMpc.value, 8);
	return record;
}

test('with JavaScript: upload a CSV, get per-star results, the combined μ0, H0 with its budget and caution, and export JSON', async ({
	page
}) => {
	const apiCalls: string[] = [];
	page.on('request', (request) => {
		if (request.method() === 'POST') apiCalls.push(new URL(request.url()).pathname);
	});
	await fillHost(page, 'upload');
	await expect(page.getByLabel('…or paste it')).toHaveValue(csv);
	await checkDistanceAndH0(page);
	await expect(
		page.getByTestId('host-pl-diagram').getByRole('img', { name: /Host PL diagram: 30 stars/ })
	).toBeVisible();
	await exportJson(page);
	// In place: the page asked the API, never its own form actions.
	expect(apiCalls).toContain('/api/v1/distances');
	expect(apiCalls).toContain('/api/v1/hubble');
	expect(apiCalls.filter((path) => path.startsWith('/worksheet'))).toEqual([]);
});

test.describe('without JavaScript', () => {
	test.use({ javaScriptEnabled: false });

	test('paste a CSV, post the form, get the same distance and H0, and export JSON and CSV', async ({ page }) => {
		await fillHost(page, 'paste');
		await checkDistanceAndH0(page);
		await expect(page.getByTestId('host-pl-diagram')).toContainText('table below lists every star');
		await exportJson(page);
		const download = page.waitForEvent('download');
		await page.getByRole('button', { name: 'Export CSV' }).click();
		const text = readFileSync((await (await download).path())!, 'utf8');
		expect(text).toContain(`# relation: ${pinned.ref}\n# relation_digest: ${pinned.digest}\n`);
		expect(text).toContain(`# hubble_input_velocity_km_s: ${VELOCITY}`);
		expect(text.split('\n').filter((line) => line.startsWith('LK-'))).toHaveLength(30);
	});

	test('a bad CSV shows the line, column, value and reason', async ({ page }) => {
		await page.goto('/worksheet');
		await page.getByLabel('Current public versions').selectOption(pinned.ref);
		await page.getByLabel('…or paste it').fill(`${csv.split('\n').slice(0, 3).join('\n')}\nLK-bad,-4,25.1,0.05,,,,\n`);
		await page.getByRole('button', { name: 'Compute distances' }).click();
		const errors = page.getByTestId('csv-errors');
		await expect(errors.getByRole('row', { name: /period_days/ })).toContainText('4');
		await expect(errors.getByRole('row', { name: /period_days/ })).toContainText('-4');
		await expect(errors.getByRole('row', { name: /period_days/ })).toContainText('must be greater than 0');
		await expect(page.getByTestId('combined-mu0')).toHaveCount(0);
	});
});

test('with JavaScript a bad CSV is refused in place, with its row', async ({ page }) => {
	await page.goto('/worksheet');
	await expect(page.getByTestId('worksheet-form')).toHaveAttribute('data-hydrated', 'true');
	await page.getByLabel('…or type a reference').fill(pinned.ref);
	await page.getByLabel('…or paste it').fill('id,period_days,mean_mag,mean_mag_err\nA,10,abc,0.05\n');
	await page.getByRole('button', { name: 'Compute distances' }).click();
	await expect(page.getByTestId('csv-errors').getByRole('row', { name: /mean_mag/ })).toContainText('is not a number');
	await expect(page.getByTestId('csv-errors').getByRole('row', { name: /mean_mag/ })).toContainText('2');
});

test.describe('POST /api/v1/distances over HTTP', () => {
	test('answers per-star and combined results equal to the engine, recording the ref and digest', async ({
		request
	}) => {
		const response = await request.post('/api/v1/distances', { data: { relation: pinned.ref, stars } });
		expect(response.status()).toBe(200);
		await expectMatchesOpenApi(request, response, 'POST /api/v1/distances');
		const body = await response.json();
		expect(body.relation).toMatchObject({ ref: pinned.ref, digest: pinned.digest, status: 'current' });
		expect(body.results).toHaveLength(30);
		expect(Math.abs(body.combined.mu0 - expected.mu0.value)).toBeLessThan(1e-12);
		expect(body.combined.mu0_err_stat).toBeCloseTo(expected.mu0.statistical, 14);
		expect(body.combined.mu0_err_sys).toBeCloseTo(expected.mu0.systematic, 14);
		expect(body.combined.distance_mpc).toBeCloseTo(distanceFromModulus(expected.mu0.value, 'Mpc'), 10);
		expect(body.combined.rejected.map((r: { id: string }) => r.id)).toEqual(expected.rejected.map((r) => r.star));
		const beyond = body.results.find((r: { id: string }) => r.id === 'LK-030 (invented)');
		expect(beyond.warnings.map((w: { code: string }) => w.code)).toContain('outside_validity_range');
	});

	test('bad rows are 422 naming stars/i/field; too many stars 413; a hidden version 404', async ({ request }) => {
		const bad = await request.post('/api/v1/distances', {
			data: {
				relation: pinned.ref,
				stars: [stars[0], { ...stars[1], mean_mag_err: -1 }, { ...stars[2], period_days: 'ten' }]
			}
		});
		expect(bad.status()).toBe(422);
		await expectMatchesOpenApi(request, bad, 'POST /api/v1/distances');
		const problem = await bad.json();
		expect(problem.errors.map((e: { path: string }) => e.path)).toEqual([
			'stars/1/mean_mag_err',
			'stars/2/period_days'
		]);
		expect(problem.errors[0].message).toContain('stars[1].mean_mag_err');

		const many = await request.post('/api/v1/distances', {
			data: { relation: pinned.ref, stars: Array.from({ length: 100_001 }, (_, i) => ({ ...stars[0], id: `s${i}` })) }
		});
		expect(many.status()).toBe(413);
		await expectMatchesOpenApi(request, many, 'POST /api/v1/distances');

		const hidden = await pinPublishedRelation(orm, {
			slug: uniqueSlug('worksheet-hidden'),
			title: 'Group-private (test)',
			relation: invented,
			visibility: 'group'
		});
		const missing = await request.post('/api/v1/distances', { data: { relation: hidden.ref, stars } });
		expect(missing.status()).toBe(404);
		await expectMatchesOpenApi(request, missing, 'POST /api/v1/distances');
	});

	test('reproduces the engine’s OGLE LMC worked example: μ_LMC = 18.477 from the OGLE-III W_I relation', async ({
		request
	}) => {
		test.skip(!hasReferenceData('ogle-magellanic-cepheids'), 'reference data ogle-magellanic-cepheids not found');
		// W_I = −3.314 log P + 15.892 (Soszyński et al. 2008, AcA 58, 163, from memory); μ_LMC = 18.477
		// (Pietrzyński et al. 2019, Nature 567, 200, from memory); data: OGLE-IV, Soszyński et al. 2015, AcA 65, 297.
		const ogle: Relation = {
			...invented,
			coefficients: { zeroPoint: 15.892 - 3.314 - 18.477, slope: -3.314, metallicityTerm: null },
			covariance: {
				axes: ['zero_point', 'slope'],
				matrix: [
					[0.02 ** 2, 0],
					[0, 0.05 ** 2]
				]
			},
			validity: { logPeriodMin: 0.3, logPeriodMax: 2, fehMin: null, fehMax: null }
		};
		const { ref } = await pinPublishedRelation(orm, {
			slug: uniqueSlug('ogle-w-i'),
			title: 'OGLE-III W_I (test)',
			relation: ogle
		});
		const lmc = readReferenceFile('ogle-magellanic-cepheids', 'lmccephdata.csv')
			.trim()
			.split('\n')
			.map((line) => line.split(','))
			.filter((f) => f[1] === 'F' && Number(f[4]) > 0 && Number(f[5]) > 0)
			.map((f) => ({
				id: f[0],
				period_days: Number(f[7]),
				mean_mag: Number(f[4]) - 1.55 * (Number(f[5]) - Number(f[4])),
				mean_mag_err: 0.02
			}));
		const engine = combineHostDistance(
			ogle,
			applyRelation(
				ogle,
				lmc.map((s) => ({ id: s.id, periodDays: s.period_days, mag: s.mean_mag, magErr: s.mean_mag_err }))
			).stars,
			{ clipSigma: 3 }
		);
		const response = await request.post('/api/v1/distances', { data: { relation: ref, stars: lmc } });
		expect(response.status()).toBe(200);
		const body = await response.json();
		expect(Math.abs(body.combined.mu0 - engine.mu0.value)).toBeLessThan(1e-12);
		expect(Math.abs(body.combined.mu0 - 18.477)).toBeLessThan(0.02);
		expect(body.combined.n_used).toBe(engine.nUsed);
	});

	test('100 000 stars end to end over HTTP, against a same-run baseline', async () => {
		test.setTimeout(120_000);
		const many = Array.from({ length: 100_000 }, (_, i) => ({
			id: `LK-${i} (invented)`,
			period_days: 3 + (i % 500) * 0.1,
			mean_mag: 24 + (i % 17) * 0.02,
			mean_mag_err: 0.05
		}));
		const body = JSON.stringify({ relation: pinned.ref, stars: many });
		// Node's own fetch, not Playwright's request context, which relays bodies through its driver.
		const post = async (text: string) => {
			const started = performance.now();
			const response = await fetch(`${origin}/api/v1/distances`, {
				method: 'POST',
				headers: { 'content-type': 'application/json' },
				body: text
			});
			const answer = await response.text();
			return { ms: performance.now() - started, status: response.status, bytes: answer.length };
		};
		let fastest = Infinity;
		let bytes = 0;
		for (let round = 0; round < 3; round++) {
			const result = await post(body);
			expect(result.status).toBe(200);
			fastest = Math.min(fastest, result.ms);
			bytes = result.bytes;
		}
		// Baseline: the same bytes to the same server, refused once parsed (the relation does not exist).
		let baseline = Infinity;
		for (let round = 0; round < 3; round++) {
			const result = await post(body.replace(pinned.ref, 'no-such-relation@1'));
			expect(result.status).toBe(404);
			baseline = Math.min(baseline, result.ms);
		}
		console.info(
			`POST /api/v1/distances, 100 000 stars: ${fastest.toFixed(0)} ms end to end (${(body.length / 1e6).toFixed(1)} MB in, ` +
				`${(bytes / 1e6).toFixed(1)} MB out); upload + parse + refuse: ${baseline.toFixed(0)} ms; load average ${loadavg()[0].toFixed(1)}`
		);
		expect(bytes).toBeGreaterThan(10_000_000);
		// The answer is about five times the request and every one of its 900 000 numbers (each star's μ, M,
		// errors, distance and its 16th/84th percentiles) is formatted, so the whole exchange costs many
		// no-work round trips of the request; a per-star slowdown (or worse) breaks this.
		expect(fastest).toBeLessThan(20 * baseline);
	});
});
