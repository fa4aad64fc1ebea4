import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import {
	inEngineOneShape,
	sealRelationVersion,
	syntheticCalibrators,
	type RelationVersionContent
} from '../../src/lib/calibration/index';
import { Relation, RelationVersion, VersionLifecycle } from '../../src/lib/server/entities/index';
import { createGroupRow, openOrm, uniqueSlug } from './support/accounts';
import { api, approveOverApi, reviewPerson, signedInContext, type Person } from './support/review-setup';

/**
 * Error budgets on the pages: a weighted fit whose stated errors are too small warns on the refit page, on
 * the reviewer's page and in the frozen version, whose page shows the shared systematics term by term; a
 * version frozen before systematics were recorded says so.
 */
let orm: MikroORM;
let author: Person;
let reviewer: Person;
let slug: string;
let fitJob: string;
let pendingProposal: string;
const started = performance.now();

/** Invented host Cepheids (one named host, μ = 18.5 ± 0.03) whose errors are a fifth of the scatter. */
function csv(): string {
	const points = syntheticCalibrators(
		{ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 },
		{ count: 40, seed: 31 }
	);
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err,host',
		...points.map(
			(p, i) =>
				`Invented ${p.star},${8500 + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},` +
				`${(p.absMag + 18.5).toFixed(4)},${(p.absMagErr / 5).toFixed(4)},18.5,0.03,Invented Host`
		)
	].join('\n');
}

async function weightedFit(set: string, extra: Record<string, unknown> = {}): Promise<string> {
	const fit = await api(author.token, 'POST', '/api/v1/fits', {
		calibrator_set: set,
		revision: 1,
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor: 'host',
		method: 'wls',
		...extra
	});
	expect(fit.status).toBe(200);
	return fit.body.id as string;
}

async function propose(fit: string, title: string): Promise<string> {
	const proposed = await api(author.token, 'POST', `/api/v1/relations/${slug}/proposals`, { fit, title, submit: true });
	expect(proposed.status).toBe(201);
	return proposed.body.id as string;
}

test.beforeAll(async () => {
	test.setTimeout(120_000);
	orm = await openOrm();
	const group = await createGroupRow(orm, uniqueSlug('budget-pages'));
	author = await reviewPerson(orm, 'budget author', ['curator'], group);
	reviewer = await reviewPerson(orm, 'budget reviewer', ['reviewer'], group);
	const set = uniqueSlug('budget-set');
	expect(
		(
			await api(author.token, 'POST', '/api/v1/calibrator-sets', {
				slug: set,
				title: 'Invented host Cepheids with small errors',
				group,
				licence: 'CC0-1.0'
			})
		).status
	).toBe(201);
	expect((await api(author.token, 'POST', `/api/v1/calibrator-sets/${set}/revisions`, csv(), 'text/csv')).status).toBe(
		201
	);
	slug = uniqueSlug('budget-w-vi');
	expect(
		(
			await api(author.token, 'POST', '/api/v1/relations', {
				slug,
				title: 'Invented weighted W_VI relation',
				band: 'W_VI',
				population: 'classical_fundamental',
				anchor_type: 'geometric_host',
				group
			})
		).status
	).toBe(201);
	fitJob = await weightedFit(set);
	await approveOverApi(reviewer, await propose(fitJob, 'Weighted fit'));
	pendingProposal = await propose(
		await weightedFit(set, { fixed_slope: -3.3, fixed_slope_error: 0.05 }),
		'Weighted fit, fixed slope'
	);
});

test.afterAll(async () => {
	await orm?.close(true);
	console.log(`error-budget pages: ${(performance.now() - started).toFixed(0)} ms`);
});

test('the refit page warns that χ²/dof is too large and says the errors were scaled', async ({ browser }) => {
	const context = await signedInContext(browser, orm, author);
	const page = await context.newPage();
	await page.goto(`/relations/${slug}/refit?job=${fitJob}`);
	const caution = page.getByTestId('fit-cautions').locator('li[data-code="errors_too_small"]');
	await expect(caution).toContainText('χ²/dof =');
	await expect(caution).toContainText('exceeds 1 + 3·√(2/dof)');
	await expect(page.getByTestId('reduced-chi-square')).toContainText('errors scaled by √(χ²/dof)');
	await expect(page.getByTestId('fit-systematics')).toContainText('Invented Host distance modulus 18.5 ± 0.03 mag');
	await context.close();
});

test('the reviewer sees the same caution, the fit quality and the fixed slope as a systematic', async ({ browser }) => {
	const context = await signedInContext(browser, orm, reviewer);
	const page = await context.newPage();
	await page.goto(`/review/${pendingProposal}`);
	await expect(page.getByTestId('review-fit-cautions').locator('li[data-code="errors_too_small"]')).toContainText(
		'exceeds 1 + 3·√(2/dof)'
	);
	await expect(page.getByTestId('review-fit-quality')).toContainText('was scaled by χ²/dof');
	const wire = (await api(reviewer.token, 'GET', `/api/v1/proposals/${pendingProposal}`)).body;
	expect(wire.proposed.systematics.terms.map((term: { id: string }) => term.id)).toEqual([
		'anchor_distance',
		'fixed_slope'
	]);
	await context.close();
});

test('the version page shows the frozen systematics, the χ²/dof verdict and the cautions; anyone may read it', async ({
	page
}) => {
	await page.goto(`/relations/${slug}/versions/1`);
	const row = page.getByTestId('systematics-table').locator('tr[data-term="anchor_distance"]');
	await expect(row).toContainText('Invented Host distance modulus 18.5 ± 0.03 mag');
	await expect(row).toContainText('−0.0300');
	await expect(page.getByTestId('fit-quality')).toHaveAttribute('data-errors-too-small', 'true');
	await expect(page.getByTestId('fit-quality')).toContainText('the covariance was scaled by χ²/dof');
	await expect(page.getByTestId('wesenheit-ratio')).toContainText('R = 1.55');
	await expect(page.locator('li[data-caution="metallicity"]')).toContainText('without a metallicity term');
	await expect(page.locator('li[data-caution="dereddening"]')).toContainText('reddening-free only');
	await expect(page.locator('li[data-caution="blending"]')).toContainText('blended');
	const frozen = (await api(reviewer.token, 'GET', `/api/v1/pins/${slug}@1`)).body;
	expect(frozen.fit_quality.errors_too_small).toBe(true);
});

test('a version frozen by engine 1.0.0 reads "systematics not recorded"', async ({ page }) => {
	const em = orm.em.fork();
	const relation = await em.findOneOrFail(Relation, { slug });
	const current = await em.findOneOrFail(RelationVersion, { relation, number: 1 });
	const { digest: _d, ...rest } = current.content as unknown as RelationVersionContent & { digest: string };
	const old = sealRelationVersion({ ...inEngineOneShape(rest), ref: `${slug}@2`, version: 2 });
	const id = crypto.randomUUID();
	em.create(RelationVersion, { id, relation, number: 2, digest: old.digest, content: old as never, proposalId: null });
	em.create(VersionLifecycle, { id, relation, number: 2, status: 'superseded', embargoUntil: null });
	await em.flush();
	await page.goto(`/relations/${slug}/versions/2`);
	await expect(page.getByTestId('systematics-not-recorded')).toContainText('Systematics not recorded');
	await expect(page.getByTestId('systematics-table')).toHaveCount(0);
});
