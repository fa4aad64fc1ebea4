import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import {
	sealRelationVersion,
	systematicCovariance,
	versionContentFromRefit,
	type RefitResult,
	type RelationVersionContent
} from '../../src/lib/calibration/index';
import { AnalysisJob, Relation } from '../../src/lib/server/entities/index';
import type { Actor } from '../../src/lib/server/registry/actor';
import { createCalibratorSet, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { fitResultOf, requestFit } from '../../src/lib/server/registry/fits';
import { createProposal, getProposal, reviewProposal } from '../../src/lib/server/registry/proposals';
import { createRelation } from '../../src/lib/server/registry/relations';
import { reproduceVersion } from '../../src/lib/server/registry/reproduce';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { findVersion, freezeVersion } from '../../src/lib/server/registry/versions';
import { fitResultToWire } from '../../src/lib/server/registry/wire';
import { computeDistances, readDistanceEnvelope, toDistanceResponse } from '../../src/lib/server/api/distances';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

/**
 * Error budgets through the real registry on real PostgreSQL: a weighted fit whose errors are too small is
 * proposed, approved and frozen by engine 2 with its χ²/dof verdict and the host distance as a shared
 * systematic, read back and reproduced; a version frozen by engine 1.0.0 keeps reproducing its own digest.
 */
let orm: MikroORM;
let store: TestObjectStore;
let curator: Actor;
let reviewer: Actor;
let setSlug: string;
let slug: string;
const started = performance.now();
const em = () => orm.em.fork();

/** Invented host Cepheids (μ = 18.5 ± 0.03, one named host) with errors shrunk fivefold below the scatter. */
function tooPreciseCsv(): string {
	const [header, ...rows] = hostCalibratorCsv({ seed: 21 }).trimEnd().split('\n');
	const at = header.split(',').indexOf('mag_err_W_VI');
	return (
		[
			header,
			...rows.map((row) => {
				const cells = row.split(',');
				cells[at] = (Number(cells[at]) / 5).toFixed(4);
				return cells.join(',');
			})
		].join('\n') + '\n'
	);
}

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'budget');
	const inGroup = [{ groupId: group.id, standing: 'member' as const }];
	curator = await createActor(orm, 'budget-curator', ['reader', 'curator'], inGroup);
	reviewer = await createActor(orm, 'budget-reviewer', ['reader', 'reviewer'], inGroup);
	setSlug = unique('budget-set');
	await createCalibratorSet(em(), curator, {
		slug: setSlug,
		title: 'Invented host Cepheids with too-small errors',
		description: '',
		group: group.slug,
		licence: 'CC0-1.0',
		citations: []
	});
	await uploadRevision(em(), store.storage, curator, setSlug, {
		bytes: new TextEncoder().encode(tooPreciseCsv()),
		mediaType: 'text/csv',
		fileName: 'host.csv',
		mapping: {},
		note: ''
	});
	slug = unique('budget-w-vi');
	await createRelation(em(), curator, {
		slug,
		title: 'Invented weighted relation',
		description: '',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchorType: 'geometric_host',
		group: group.slug,
		visibility: 'public',
		requiredApprovals: 1,
		magnitudeSystem: null
	});
});

afterAll(async () => {
	await store.close();
	await orm.close(true);
	console.log(`error-budget integration: ${(performance.now() - started).toFixed(0)} ms`);
});

async function weightedFit(extra: Record<string, unknown> = {}) {
	const request = FitRequestSchema.parse({
		calibrator_set: setSlug,
		revision: 1,
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor: 'host',
		method: 'wls',
		...extra
	});
	const { job } = await requestFit(em(), curator, request, null);
	expect(job.state).toBe('succeeded');
	return job;
}

describe('error budget through the registry', () => {
	test('a weighted fit is frozen with its scaled covariance, χ²/dof warning and the host distance as a systematic, which a host distance then carries once', async () => {
		const job = await weightedFit();
		const wire = fitResultToWire(fitResultOf(job) as RefitResult);
		expect(wire.fit_quality).toMatchObject({ covariance_scaled: true, errors_too_small: true });
		expect(wire.warnings).toContainEqual(expect.objectContaining({ code: 'errors_too_small' }));
		const proposal = await createProposal(em(), curator, slug, {
			fit: job.id,
			title: 'Weighted',
			rationale: '',
			embargoUntil: null,
			submit: true
		});
		// The reviewer's comparison carries what would be frozen, verdict included.
		const view = await getProposal(em(), reviewer, proposal.id);
		expect(view.proposed.fit_quality).toMatchObject({ errors_too_small: true });
		expect(view.fit.warnings.map((w) => w.code)).toContain('errors_too_small');
		await reviewProposal(em(), reviewer, proposal.id, 'approve', '');

		const { version } = await findVersion(em(), null, slug, 1);
		const content = version.content as unknown as RelationVersionContent;
		expect(content.engine_version).toBe('2.0.0');
		expect(content.fit.weighted_covariance).toBe('reduced_chi_square_above_one');
		expect(content.fit_quality).toMatchObject({ covariance_scaled: true, errors_too_small: true });
		expect(content.fit_quality!.reduced_chi_square).toBeGreaterThan(1 + 3 * Math.sqrt(2 / 38));
		expect(content.wesenheit_ratio).toBe(1.55);
		expect(content.systematics!.terms).toHaveLength(1);
		const [anchor] = content.systematics!.terms;
		expect(anchor).toMatchObject({ id: 'anchor_distance', value: 18.5, error: 0.03 });
		expect(anchor.label).toBe('Invented Host distance modulus 18.5 ± 0.03 mag');
		// M = m − μ: +1σ of the shared μ moves a by −σ and b not at all (common practice).
		expect(anchor.effect.zero_point).toBeCloseTo(-0.03, 12);
		expect(Math.abs(anchor.effect.slope)).toBeLessThan(1e-12);
		// Counted once: the statistical covariance does not contain it, the systematic one is exactly it.
		const statistical = content.covariance.matrix[0][0];
		expect(statistical).toBeLessThan(0.03 ** 2);
		expect(systematicCovariance(content)!.matrix[0][0]).toBeCloseTo(0.03 ** 2, 15);

		const reproduction = await reproduceVersion(em(), null, slug, 1);
		expect(reproduction.differences).toEqual([]);
		expect(reproduction.digestMatches).toBe(true);

		// Applied to an invented host, the frozen anchor reaches its distance exactly once, beside the relation's
		// own coefficient error at the host's mean period: σ_sys = √(σ_anchor² + gᵀΣg), g = (1, ⟨log P⟩ − p0).
		const hostStars = Array.from({ length: 30 }, (_, i) => {
			const logPeriod = 0.5 + 0.04 * i;
			return {
				id: `budget-host-${i} (invented)`,
				period_days: 10 ** logPeriod,
				mean_mag: 29 - 5.95 - 3.3 * (logPeriod - 1) + 0.04 * Math.sin(7 * i),
				mean_mag_err: 0.05
			};
		});
		const applied = toDistanceResponse(
			await computeDistances(em(), null, readDistanceEnvelope({ relation: `${slug}@1`, stars: hostStars }))
		);
		const g = [1, applied.combined.mean_log_period - content.pivot_log_period];
		const sigma = content.covariance.matrix;
		const gSg = g[0] * g[0] * sigma[0][0] + 2 * g[0] * g[1] * sigma[0][1] + g[1] * g[1] * sigma[1][1];
		expect(Math.abs(applied.combined.mu0_err_sys - Math.sqrt(0.03 ** 2 + gSg))).toBeLessThan(1e-6);
		expect(applied.combined.error_budget.filter((term) => term.id === 'anchor_distance')).toHaveLength(1);
		expect(applied.warnings.map((warning) => warning.code)).not.toContain('systematics_not_recorded');
	});

	test('a version frozen by engine 1.0.0 has no systematics and still reproduces its own digest', async () => {
		// Engine 1.0.0 took weighted errors as they were unless asked otherwise; its spec says `absolute`.
		const job = await weightedFit({ weighted_covariance: 'absolute' });
		const result = fitResultOf(job) as RefitResult;
		const relation = await em().findOneOrFail(Relation, { slug });
		const { version: current } = await findVersion(em(), null, slug, 1);
		const number = current.number + 1;
		const old = sealRelationVersion(
			versionContentFromRefit(
				result,
				{
					slug,
					version: number,
					magnitudeSystem: 'Vega',
					calibratorSet: (current.content as unknown as RelationVersionContent).calibrator_set,
					approvedBy: [{ name: 'Invented Reviewer', orcid: null }],
					approvedAt: '2026-06-01T12:00:00Z'
				},
				'1.0.0'
			)
		);
		expect(Object.keys(old)).not.toContain('systematics');
		const fork = em();
		await freezeVersion(fork, await fork.findOneOrFail(Relation, relation.id), old, null, null);

		const { version } = await findVersion(em(), null, slug, number);
		const stored = version.content as unknown as RelationVersionContent;
		expect(stored.engine_version).toBe('1.0.0');
		expect(systematicCovariance(stored)).toBeNull();
		const reproduction = await reproduceVersion(em(), null, slug, number);
		expect(reproduction.differences).toEqual([]);
		expect(reproduction.digestMatches).toBe(true);
		expect(reproduction.recomputedDigest).toBe(version.digest);
		expect(await em().count(AnalysisJob, { id: job.id })).toBe(1);
	});
});
