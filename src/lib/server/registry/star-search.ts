import type { EntityManager } from '@mikro-orm/postgresql';
import type { Actor } from './actor';
import { calibratorRevisionHref } from './digest-lookup';
import { pinHref } from './read-wire';
import { VIEWER_LATERAL, VISIBLE_VERSION, viewerLateral, viewerParams } from './relation-catalogue';
import { viewerOf } from './version-standing';

/**
 * Where a star appears: the calibrator revisions whose rows name it (by `star` or `cross_id`, ignoring
 * case; found through the GIN index on app_calibrator_star_keys, so a search reads only the revisions
 * that hold the name, and a page holds at most `limit` ≤ 200 appearances), and for each the relation versions fitted from that revision, saying whether the fit used the
 * star, clipped it (the frozen `rejected` list) or left it out before fitting (population, period range).
 */
export type StarUsage = 'used' | 'rejected' | 'excluded' | 'not_used';

export interface StarInVersion {
	relation: string;
	version: number;
	digest: string;
	usage: StarUsage;
	/** `sigma_clip`, `population_not_selected`, `outside_period_range`, or null. */
	reason: string | null;
	detail: string | null;
	standardizedResidual: number | null;
}

export interface StarAppearance {
	star: string;
	crossId: string | null;
	calibratorSet: string;
	revision: number;
	digest: string;
	href: string;
	versions: (StarInVersion & { href: string })[];
}

export interface StarPage {
	items: StarAppearance[];
	/** (calibrator set, revision) of the last item when more follow. */
	nextAfter: [string, number] | null;
}

interface RawHit {
	set_slug: string;
	revision: number;
	digest: string;
	star: string;
	cross_id: string | null;
}

interface RawUse {
	slug: string;
	number: number;
	digest: string;
	set_slug: string;
	revision: number;
	rejected: { reason: string; standardized_residual: number | null } | null;
	residual: { used: boolean; standardizedResidual: number } | null;
	excluded: { code: string; message: string } | null;
	clipped: { detail: string } | null;
}

function usageOf(use: RawUse): Pick<StarInVersion, 'usage' | 'reason' | 'detail' | 'standardizedResidual'> {
	if (use.rejected)
		return {
			usage: 'rejected',
			reason: use.rejected.reason,
			detail: use.clipped?.detail ?? null,
			standardizedResidual: use.rejected.standardized_residual
		};
	if (use.residual?.used)
		return { usage: 'used', reason: null, detail: null, standardizedResidual: use.residual.standardizedResidual };
	if (use.excluded)
		return { usage: 'excluded', reason: use.excluded.code, detail: use.excluded.message, standardizedResidual: null };
	return { usage: 'not_used', reason: null, detail: null, standardizedResidual: null };
}

export async function findStar(
	em: EntityManager,
	actor: Actor | null,
	query: { q: string; limit: number; after: [string, number] | null }
): Promise<StarPage> {
	const connection = em.getConnection();
	const params: unknown[] = [...viewerParams(viewerOf(actor)), query.q, query.q, query.q];
	let keyset = '';
	if (query.after) {
		keyset = 'and (s.slug, cr.number) > (?, ?)';
		params.push(...query.after);
	}
	params.push(query.limit + 1);
	const hits = (await connection.execute(
		`select s.slug as set_slug, cr.number as revision, cr.digest, item->>'star' as star,
			item->'values'->>'cross_id' as cross_id
		from app_calibrator_revision cr
		join app_calibrator_set s on s.id = cr.calibrator_set_id
		cross join lateral jsonb_array_elements(cr.content->'rows') as item
		${viewerLateral('s.group_id')}
		where app_calibrator_star_keys(cr.content) @> array[lower(cast(? as text))]
			and (s.visibility = 'public' or viewer.member)
			and (lower(item->>'star') = lower(?) or lower(item->'values'->>'cross_id') = lower(?)) ${keyset}
		order by s.slug, cr.number, item->>'star'
		limit ?`,
		params
	)) as RawHit[];
	const page = hits.slice(0, query.limit);
	const uses = page.length ? await usesOf(em, actor, page) : [];
	return {
		items: page.map((hit) => ({
			star: hit.star,
			crossId: hit.cross_id,
			calibratorSet: hit.set_slug,
			revision: hit.revision,
			digest: hit.digest,
			href: calibratorRevisionHref(hit.set_slug, hit.revision),
			versions: uses
				.filter((use) => use.set_slug === hit.set_slug && use.revision === hit.revision)
				.map((use) => ({
					relation: use.slug,
					version: use.number,
					digest: use.digest,
					href: pinHref(use.slug, use.number),
					...usageOf(use)
				}))
		})),
		nextAfter: hits.length > query.limit ? [page.at(-1)!.set_slug, page.at(-1)!.revision] : null
	};
}

/** Every visible version fitted from one of the hit revisions, with what its fit did with the star. */
async function usesOf(em: EntityManager, actor: Actor | null, hits: RawHit[]): Promise<RawUse[]> {
	const values = hits.map(() => '(?, cast(? as int), ?)').join(', ');
	const starIn = (list: string) => `(select x from jsonb_array_elements(${list}) x where x->>'star' = h.star limit 1)`;
	return (await em.getConnection().execute(
		`select r.slug, l.number, v.digest, h.set_slug, h.revision,
			${starIn(`v.content->'rejected'`)} as rejected,
			${starIn(`j.result->'residuals'`)} as residual,
			${starIn(`j.result->'excluded'`)} as excluded,
			${starIn(`j.result->'rejected'`)} as clipped
		from (values ${values}) as h(set_slug, revision, star)
		join app_relation_version v
			on v.content->'calibrator_set'->>'slug' = h.set_slug
			and cast(v.content->'calibrator_set'->>'revision' as int) = h.revision
		join app_version_lifecycle l on l.id = v.id
		join app_relation r on r.id = v.relation_id
		${VIEWER_LATERAL}
		left join app_proposal p on p.id = v.proposal_id
		left join app_analysis_job j on j.id = p.fit_id
		where (r.visibility = 'public' or viewer.member) and ${VISIBLE_VERSION}
		order by r.slug, l.number`,
		[...hits.flatMap((hit) => [hit.set_slug, hit.revision, hit.star]), ...viewerParams(viewerOf(actor))]
	)) as RawUse[];
}
