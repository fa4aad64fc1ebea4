import type { EntityManager } from '@mikro-orm/postgresql';
import { VersionLifecycle } from '../entities/version-lifecycle.entity';
import { isEmbargoed } from '../registry/versions';

export interface RelationChoice {
	ref: string;
	title: string;
	band: string;
	population: string;
}

/** The current version of every public relation that anyone may see, for the worksheet's picker. */
export async function currentPublicVersions(em: EntityManager): Promise<RelationChoice[]> {
	const lifecycles = await em.find(
		VersionLifecycle,
		{ status: 'current', relation: { visibility: 'public' } },
		{ populate: ['relation'], orderBy: { relation: { slug: 'asc' } } }
	);
	return lifecycles
		.filter((lifecycle) => !isEmbargoed(lifecycle))
		.map((lifecycle) => ({
			ref: `${lifecycle.relation.slug}@${lifecycle.number}`,
			title: lifecycle.relation.title,
			band: lifecycle.relation.band,
			population: lifecycle.relation.population
		}));
}
