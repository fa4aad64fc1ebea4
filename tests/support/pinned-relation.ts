import type { MikroORM } from '@mikro-orm/postgresql';
import {
	ENGINE_VERSION,
	digestOf,
	sealRelationVersion,
	type Relation as EngineRelation,
	type RelationVersionContent
} from '../../src/lib/calibration/index';
import { Group, User } from '../../src/lib/server/entities/index';
import { Relation } from '../../src/lib/server/entities/relation.entity';
import { RelationVersion } from '../../src/lib/server/entities/relation-version.entity';
import { VersionLifecycle } from '../../src/lib/server/entities/version-lifecycle.entity';

/**
 * Freezes a version with exactly the given coefficients (a published relation, for checks against a
 * worked example) without a fit and a review: a test fixture, written straight into the tables.
 */
export async function pinPublishedRelation(
	orm: MikroORM,
	options: {
		slug: string;
		title: string;
		relation: EngineRelation;
		visibility?: 'public' | 'group';
		embargoUntil?: Date | null;
		groupSlug?: string;
		/**
		 * Rewrites the content before it is frozen (e.g. as another engine version would have written it);
		 * the digest is then taken over the rewritten content as it stands, without schema validation.
		 */
		reshape?: (content: Record<string, unknown>) => Record<string, unknown>;
	}
): Promise<{ ref: string; digest: string; groupSlug: string }> {
	const em = orm.em.fork();
	const suffix = crypto.randomUUID().slice(0, 8);
	const group =
		(options.groupSlug && (await em.findOne(Group, { slug: options.groupSlug }))) ||
		em.create(Group, { slug: `pinned-${suffix}`, name: `Pinned relations ${suffix}`, description: null });
	const user = em.create(User, {
		email: `pinned-${suffix}@distances.test`,
		displayName: 'Test pinning',
		affiliation: null,
		orcid: null,
		roles: ['reader', 'curator'],
		activatedAt: new Date()
	});
	const r = options.relation;
	const relation = em.create(Relation, {
		slug: options.slug,
		title: options.title,
		band: r.bandId,
		population: r.population,
		magnitudeSystem: r.magnitudeSystem,
		anchorType: 'geometric_host',
		group,
		visibility: options.visibility ?? 'public',
		createdBy: user
	});
	const content: RelationVersionContent = {
		ref: `${options.slug}@1`,
		version: 1,
		band: r.bandId,
		population: r.population,
		magnitude_system: r.magnitudeSystem,
		form: r.coefficients.metallicityTerm === null ? 'period_luminosity' : 'period_luminosity_metallicity',
		coefficients: {
			zero_point: r.coefficients.zeroPoint,
			slope: r.coefficients.slope,
			metallicity_term: r.coefficients.metallicityTerm
		},
		pivot_log_period: r.pivotLogPeriod,
		pivot_feh: r.pivotFeh,
		covariance: { axes: r.covariance.axes, matrix: r.covariance.matrix },
		intrinsic_scatter: r.intrinsicScatter,
		n_used: 1,
		rejected: [],
		validity: {
			log_period_min: r.validity.logPeriodMin,
			log_period_max: r.validity.logPeriodMax,
			feh_min: r.validity.fehMin,
			feh_max: r.validity.fehMax
		},
		fit: {
			method: 'ols',
			anchor: 'host',
			weighted_covariance: null,
			fixed_slope: null,
			fixed_zero_point: null,
			clipping: null,
			extinction_law: r.extinctionLaw,
			r_v: r.rV,
			parallax_offset: null,
			bootstrap: null,
			population: r.population,
			period_filter: { log_period_min: null, log_period_max: null },
			fundamentalised: false,
			assumed_intrinsic_scatter: null,
			intrinsic_scatter_estimator: null
		},
		engine_version: ENGINE_VERSION,
		calibrator_set: { slug: 'published-coefficients', revision: 1, digest: `sha256:${'0'.repeat(64)}` },
		approved_by: [{ name: 'Test pinning', orcid: null }],
		approved_at: '2026-01-01T00:00:00Z',
		// Published coefficients, not a refit: no shared terms or fit quality of Candlebook's own.
		systematics: { terms: [] },
		fit_quality: { reduced_chi_square: null, degrees_of_freedom: 0, covariance_scaled: false, errors_too_small: false },
		wesenheit_ratio: null
	};
	const reshaped = options.reshape?.({ ...content });
	const sealed = reshaped ? { ...reshaped, digest: digestOf(reshaped) } : sealRelationVersion(content);
	const id = crypto.randomUUID();
	em.create(RelationVersion, {
		id,
		relation,
		number: 1,
		digest: sealed.digest,
		content: sealed as unknown as Record<string, unknown>,
		proposalId: null
	});
	em.create(VersionLifecycle, {
		id,
		relation,
		number: 1,
		status: 'current',
		embargoUntil: options.embargoUntil ?? null
	});
	await em.flush();
	return { ref: content.ref, digest: sealed.digest, groupSlug: group.slug };
}
