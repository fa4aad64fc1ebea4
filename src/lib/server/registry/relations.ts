import type { EntityManager } from '@mikro-orm/postgresql';
import { getBand, isBandId, type MagnitudeSystem, type PopulationId } from '../../calibration/index';
import { Group } from '../entities/index';
import { Relation, type AnchorType, type RelationEntity, type RelationVisibility } from '../entities/relation.entity';
import { RelationWatch } from '../entities/relation-watch.entity';
import { VersionLifecycle } from '../entities/version-lifecycle.entity';
import { belongsTo, maySeePrivateOf, type Actor } from './actor';
import { auditRegistry } from './audit';
import { conflict, forbidden, invalid, notFound } from './errors';
import { getSetting } from './settings';

export interface CreateRelationInput {
	slug: string;
	title: string;
	description: string;
	band: string;
	population: PopulationId;
	anchorType: AnchorType;
	group: string;
	visibility: RelationVisibility;
	requiredApprovals: number | null;
	magnitudeSystem: MagnitudeSystem | null;
}

/** The magnitude system a band's catalogue uses (a Wesenheit band takes its magnitude band's). */
export function defaultMagnitudeSystem(bandId: string): MagnitudeSystem {
	const band = getBand(bandId);
	return band.kind === 'single' ? band.magnitudeSystem : defaultMagnitudeSystem(band.magnitudeBand);
}

export async function createRelation(em: EntityManager, actor: Actor, input: CreateRelationInput) {
	if (!isBandId(input.band))
		throw invalid(`${input.band} is not a band Candlebook knows.`, [{ path: 'band', message: 'unknown band' }]);
	const group = await em.findOne(Group, { slug: input.group });
	if (!group) throw invalid(`There is no group called ${input.group}.`, [{ path: 'group', message: 'unknown group' }]);
	if (!(await belongsTo(em, actor, group.id)))
		throw forbidden(`Only members of ${group.slug} may create relations for it.`);
	const requiredApprovals = input.requiredApprovals ?? (await getSetting(em, 'default_required_approvals'));
	return em.transactional(async (tx) => {
		if (await tx.count(Relation, { slug: input.slug }))
			throw conflict('slug-taken', `A relation called ${input.slug} exists already.`);
		const relation = tx.create(Relation, {
			slug: input.slug,
			title: input.title,
			description: input.description,
			band: input.band,
			population: input.population,
			magnitudeSystem: input.magnitudeSystem ?? defaultMagnitudeSystem(input.band),
			anchorType: input.anchorType,
			group,
			visibility: input.visibility,
			requiredApprovals,
			createdBy: actor.id
		});
		await tx.flush();
		await auditRegistry(tx, 'relation-created', actor, relation.slug, {
			group: group.slug,
			band: relation.band,
			population: relation.population,
			visibility: relation.visibility,
			requiredApprovals
		});
		return relation;
	});
}

/** Whether the actor may see the relation at all (group-private relations: members and admins). */
export async function canSeeRelation(em: EntityManager, actor: Actor | null, relation: RelationEntity) {
	if (relation.visibility === 'public') return true;
	return maySeePrivateOf(em, actor, relation.group.id);
}

/** The relation, or 404 — also when it exists but the actor may not see it (its name is not leaked). */
export async function findVisibleRelation(em: EntityManager, actor: Actor | null, slug: string) {
	const relation = await em.findOne(Relation, { slug }, { populate: ['group'] });
	if (!relation || !(await canSeeRelation(em, actor, relation))) throw notFound(`relation called ${slug}`);
	return relation;
}

/** The current version's number: the newest approved version that is not deprecated, or null. */
export async function currentVersionNumber(em: EntityManager, relationId: string): Promise<number | null> {
	const current = await em.findOne(
		VersionLifecycle,
		{ relation: relationId, status: 'current' },
		{ fields: ['number'] }
	);
	return current?.number ?? null;
}

export async function watchRelation(em: EntityManager, actor: Actor, slug: string, watching: boolean) {
	const relation = await findVisibleRelation(em, actor, slug);
	const existing = await em.findOne(RelationWatch, { relation, user: actor.id });
	if (watching && !existing) {
		em.create(RelationWatch, { relation, user: actor.id });
		await em.flush();
		await auditRegistry(em, 'relation-watched', actor, slug);
	} else if (!watching && existing) {
		await em.removeAndFlush(existing);
		await auditRegistry(em, 'relation-unwatched', actor, slug);
	}
	return watching;
}
