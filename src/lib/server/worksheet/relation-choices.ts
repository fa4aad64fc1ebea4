import type { EntityManager } from '@mikro-orm/postgresql';
import { VersionLifecycle } from '../entities/version-lifecycle.entity';
import { standingsFor } from '../registry/version-standing';
import { isEmbargoed } from '../registry/versions';

export interface RelationChoice {
	ref: string;
	title: string;
	band: string;
	population: string;
}

/**
 * The current version of every public relation as anyone may see it, for the worksheet's picker: when
 * the newest version is still under embargo, the newest one out of embargo is current to everyone else.
 */
export async function currentPublicVersions(em: EntityManager): Promise<RelationChoice[]> {
	const lifecycles = await em.find(
		VersionLifecycle,
		{ relation: { visibility: 'public' } },
		{ populate: ['relation'], orderBy: { relation: { slug: 'asc' }, number: 'asc' } }
	);
	const byRelation = new Map<string, typeof lifecycles>();
	for (const lifecycle of lifecycles.filter((candidate) => !isEmbargoed(candidate))) {
		byRelation.set(lifecycle.relation.slug, [...(byRelation.get(lifecycle.relation.slug) ?? []), lifecycle]);
	}
	return [...byRelation.values()].flatMap((visible) => {
		const standings = standingsFor(visible);
		return visible
			.filter((lifecycle) => standings.get(lifecycle.number) === 'current')
			.map((lifecycle) => ({
				ref: `${lifecycle.relation.slug}@${lifecycle.number}`,
				title: lifecycle.relation.title,
				band: lifecycle.relation.band,
				population: lifecycle.relation.population
			}));
	});
}
