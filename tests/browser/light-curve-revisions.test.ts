import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { verifyDigest } from '../../src/lib/calibration/index';
import { ASTROPY_MISSING_REASON, astropyVersion, runPython } from '../support/astropy';
import { INVENTED_STARS, inventedUploadCsv } from '../support/light-curves';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';
import { expectMatchesOpenApi } from './support/openapi-contract';

/**
 * Light-curve analyses into a calibrator revision, over HTTP against the production build and through
 * the upload wizard in headless Chromium. Outside checks: the OpenAPI document, Debian's python3-astropy
 * reading the VOTable's value-source table, and xmllint with the IVOA VOTable 1.4 schema astropy ships.
 * Stars, survey and group are invented.
 */
// Debian 12 python3-astropy 5.2.1-2+deb12u1 ships the IVOA VOTable 1.4 schema here.
const VOTABLE_XSD = '/usr/lib/python3/dist-packages/astropy/io/votable/data/VOTable.v1.4.xsd';

let orm: MikroORM;
let group: string;
let curatorId: string;
let curatorToken: string;
let strangerToken: string;
let uploadId: string;
let results: {
	analysis_id: string;
	id: string;
	band: string;
	period_days: number;
	period_err_days: number;
	mean_mag_intensity: number;
	mean_mag_intensity_err: number;
}[];
const work = mkdtempSync(join(tmpdir(), 'candlebook-lc-revisions-'));

const bearer = (token: string) => ({ authorization: `Bearer ${token}` });

// Periods left empty for two analysed stars; the third keeps its own period.
const TABLE = [
	'star,population,period_days,mag_V,parallax_mas,parallax_err_mas,reference',
	'KCS-LC-001,classical_fundamental,,,0.31,0.02,Invented 2026',
	'KCS-LC-002,classical_fundamental,,,0.27,0.02,Invented 2026',
	'KCS-LC-003,classical_fundamental,7.69,14.90,0.22,0.02,Invented 2026'
].join('\n');

async function newSet(request: APIRequestContext) {
	const slug = uniqueSlug('lc-revisions');
	const response = await request.post('/api/v1/calibrator-sets', {
		headers: bearer(curatorToken),
		data: {
			slug,
			title: `Invented Kestrel calibrators ${slug.slice(-8)} (demo)`,
			description: 'Invented calibrators whose periods come from light curves.',
			group,
			licence: 'CC-BY-4.0',
			citations: ['Invented Kestrel Survey 2026']
		}
	});
	expect(response.status(), await response.text()).toBe(201);
	return slug;
}

test.describe('light curves into calibrator revisions', () => {
	test.beforeAll(async ({ request }) => {
		test.setTimeout(120_000);
		orm = await openOrm();
		group = await createGroupRow(orm, uniqueSlug('lc-revisions'));
		const curator = await createPerson(orm, {
			label: 'light-curve curator',
			roles: ['reader', 'curator'],
			groups: [{ group, standing: 'member' }]
		});
		curatorId = curator.id;
		curatorToken = await createBearerToken(orm, curator.id, ['write']);
		const stranger = await createPerson(orm, {
			label: 'other curator',
			roles: ['reader', 'curator'],
			groups: [{ group, standing: 'member' }]
		});
		strangerToken = await createBearerToken(orm, stranger.id, ['write']);

		const created = await request.post(
			'/api/v1/light-curves/uploads?time_reference=MJD&time_offset_days=50000&name=kestrel-light-curves.csv',
			{ headers: { ...bearer(curatorToken), 'content-type': 'text/csv' }, data: inventedUploadCsv() }
		);
		expect(created.status(), await created.text()).toBe(201);
		uploadId = (await created.json()).id;
		for (let i = 0; i < 400; i++) {
			const read = await request.get(`/api/v1/light-curves/uploads/${uploadId}`, { headers: bearer(curatorToken) });
			const body = await read.json();
			if (body.job?.state === 'failed') throw new Error(`analysis failed: ${JSON.stringify(body.job.error)}`);
			if (body.job?.state === 'succeeded') {
				results = body.results;
				break;
			}
			await new Promise((resolve) => setTimeout(resolve, 150));
		}
		expect(results).toHaveLength(2 * INVENTED_STARS.length);
	});

	test.afterAll(async () => {
		await orm?.close(true);
		rmSync(work, { recursive: true, force: true });
	});

	test('a revision takes periods and intensity means over HTTP, documents each source, and VO tools read them', async ({
		request
	}) => {
		const slug = await newSet(request);
		const post = (query: string, token = curatorToken) =>
			request.post(`/api/v1/calibrator-sets/${slug}/revisions?name=kestrel.csv&${query}`, {
				headers: { ...bearer(token), 'content-type': 'text/csv' },
				data: TABLE
			});

		// Refusals first: nothing stored by any of them.
		const badFill = await post(`light_curves=${uploadId}&light_curve_fill=sometimes`);
		expect(badFill.status()).toBe(422);
		expect((await badFill.json()).errors).toContainEqual({
			path: 'light_curve_fill',
			message: 'must be one of blank, all'
		});
		const notYours = await post(`light_curves=${uploadId}`, strangerToken);
		expect(notYours.status()).toBe(404);
		expect(notYours.headers()['content-type']).toContain('application/problem+json');
		const withoutCurves = await post('');
		expect(withoutCurves.status()).toBe(422);
		expect((await withoutCurves.json()).issues[0]).toMatchObject({
			line: 2,
			column: 'period_days',
			reason: 'is missing'
		});

		const stored = await post(`light_curves=${uploadId}`);
		expect(stored.status(), await stored.text()).toBe(201);
		await expectMatchesOpenApi(request, stored, 'POST /api/v1/calibrator-sets/{slug}/revisions');
		const uploaded = await stored.json();
		expect(uploaded).toMatchObject({ revision: 1, light_curves: { upload: uploadId, fill: 'blank', notices: [] } });

		const read = await request.get(`/api/v1/calibrator-sets/${slug}/revisions/1?format=json`);
		await expectMatchesOpenApi(request, read, 'GET /api/v1/calibrator-sets/{slug}/revisions/{n}');
		const { content } = await read.json();
		expect(verifyDigest(content).ok).toBe(true);
		expect(content.digest).toBe(uploaded.digest);
		expect(content.value_sources).toHaveLength(uploaded.light_curves.values_taken);
		for (const source of content.value_sources) {
			const analysis = results.find((result) => result.analysis_id === source.light_curve.result)!;
			expect(analysis.id).toBe(source.star);
			const expected = {
				period_days: analysis.period_days,
				period_err_days: analysis.period_err_days,
				mean_mag_intensity: analysis.mean_mag_intensity,
				mean_mag_intensity_err: analysis.mean_mag_intensity_err
			}[source.light_curve.quantity as string];
			// Exactly the analysis's number, as the light-curve API serves it.
			expect(source.value).toBe(expected);
			const row = content.rows.find((candidate: { star: string }) => candidate.star === source.star);
			expect(row.values[source.field]).toBe(source.value);
		}
		// KCS-LC-003 kept its period; only its empty Ic magnitude came from its analysis.
		expect(
			content.value_sources
				.filter((source: { star: string }) => source.star === 'KCS-LC-003')
				.map((source: { field: string }) => source.field)
		).toEqual(['mag_Ic', 'mag_err_Ic']);

		// Anyone who may read the revision can follow each source to its analysis, though the upload is private.
		const followed = await request.get(`/api/v1/calibrator-sets/${slug}/revisions/1/light-curves`);
		expect(followed.status()).toBe(200);
		await expectMatchesOpenApi(request, followed, 'GET /api/v1/calibrator-sets/{slug}/revisions/{n}/light-curves');
		const { analyses } = await followed.json();
		const named = new Set(
			content.value_sources.map((source: { light_curve: { result: string } }) => source.light_curve.result)
		);
		expect(new Set(analyses.map((analysis: { analysis_id: string }) => analysis.analysis_id))).toEqual(named);
		for (const analysis of analyses) {
			expect(`sha256:${analysis.upload.source.sha256}`).toBe(content.value_sources[0].light_curve.source_digest);
			expect(analysis).toMatchObject(results.find((result) => result.analysis_id === analysis.analysis_id)!);
			expect(analysis.fields.sort()).toEqual(
				content.value_sources
					.filter((source: { light_curve: { result: string } }) => source.light_curve.result === analysis.analysis_id)
					.map((source: { field: string }) => source.field)
					.sort()
			);
		}
		expect(analyses.find((analysis: { id: string }) => analysis.id === 'KCS-LC-003').fields.sort()).toEqual([
			'mag_Ic',
			'mag_err_Ic'
		]);
		const anonymousUpload = await request.get(`/api/v1/light-curves/uploads/${uploadId}`);
		expect(anonymousUpload.status()).toBe(401);

		const votable = await request.get(`/api/v1/calibrator-sets/${slug}/revisions/1?format=votable`);
		expect(votable.status()).toBe(200);
		const xml = await votable.text();
		const file = join(work, `${slug}.vot`);
		writeFileSync(file, xml);
		const lint = spawnSync('xmllint', ['--noout', '--schema', VOTABLE_XSD, file], { encoding: 'utf8' });
		expect(lint.status, lint.stderr).toBe(0);

		// npm test ensures Debian's python3-astropy.
		expect(astropyVersion(), ASTROPY_MISSING_REASON).not.toBeNull();
		const table = runPython<{ rows: { star: string; field: string; value: number; analysis: string }[] }>(
			[
				'import io',
				'from astropy.io.votable import parse',
				"tables = {t.name: t for t in parse(io.BytesIO(data['xml'].encode())).iter_tables()}",
				"t = tables['value_sources'].array",
				"rows = [{'star': str(r['star']), 'field': str(r['field']), 'value': float(r['value']), 'analysis': str(r['analysis'])} for r in t]",
				"print(json.dumps({'rows': rows}))"
			].join('\n'),
			{ xml }
		);
		// astropy's doubles are the JSON's, exactly (tolerance 0).
		expect(table.rows).toEqual(
			content.value_sources.map(
				(source: { star: string; field: string; value: number; light_curve: { result: string } }) => ({
					star: source.star,
					field: source.field,
					value: source.value,
					analysis: source.light_curve.result
				})
			)
		);
	});

	test('the wizard takes the values from a chosen upload, marks them in the preview, and the pages link both ways', async ({
		page,
		request,
		baseURL
	}) => {
		const slug = await newSet(request);
		await page
			.context()
			.addCookies([{ name: 'candlebook_session', value: await createSessionCookie(orm, curatorId), url: baseURL! }]);

		await page.goto(`/light-curves/${uploadId}`);
		await page
			.getByTestId('use-in-sets')
			.getByRole('link', { name: new RegExp(slug.slice(-8)) })
			.click();
		await expect(page).toHaveURL(new RegExp(`/calibrator-sets/${slug}/upload\\?light_curves=${uploadId}$`));

		await page
			.getByLabel('Calibrator table')
			.setInputFiles({ name: 'kestrel.csv', mimeType: 'text/csv', buffer: Buffer.from(TABLE) });
		await page.getByRole('button', { name: 'Read the file' }).click();
		// The upload chosen on the light-curve page is preselected.
		await expect(page.getByLabel('Light-curve upload')).toHaveValue(uploadId);
		await page.getByRole('button', { name: 'Check the table' }).click();

		const summary = page.getByTestId('light-curve-values');
		await expect(summary).toContainText('values come from light-curve analyses (empty cells only)');
		const marked = page.getByTestId('upload-rows').locator('td[data-source="light-curve"]');
		// Two stars × (period, its error, V, its error, Ic, its error) + KCS-LC-003's Ic and its error.
		await expect(marked).toHaveCount(2 * 6 + 2);
		await page.getByLabel('Note for this revision (optional)').fill('Periods from Kestrel light curves');
		await page.getByRole('button', { name: 'Commit revision' }).click();

		await expect(page).toHaveURL(new RegExp(`/calibrator-sets/${slug}\\?uploaded=1$`));
		await expect(page.getByTestId('from-light-curves')).toContainText('14 values from light-curve analyses (1 upload)');
		await expect(page.getByTestId('from-light-curves').getByRole('link', { name: 'the analyses' })).toHaveAttribute(
			'href',
			`/api/v1/calibrator-sets/${slug}/revisions/1/light-curves`
		);

		const json = await (await request.get(`/api/v1/calibrator-sets/${slug}/revisions/1?format=json`)).json();
		expect(json.content.value_sources).toHaveLength(14);
		expect(json.content.rows[0].values.period_days).toBe(
			results.filter((result) => result.id === 'KCS-LC-001').sort((a, b) => a.period_err_days - b.period_err_days)[0]
				.period_days
		);

		await page.goto(`/light-curves/${uploadId}`);
		await expect(page.getByTestId('used-by-revisions')).toContainText(`${slug} revision 1 (14 values)`);
	});
});
