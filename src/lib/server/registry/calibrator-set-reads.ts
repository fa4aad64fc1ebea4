import type { EntityManager, FilterQuery } from '@mikro-orm/postgresql';
import { CalibratorRevision, type CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import { CalibratorSet, type CalibratorSetEntity } from '../entities/calibrator-set.entity';
import { GroupMembership } from '../entities/index';
import { maySeePrivateOf, readsPrivate, seesAllAsAdmin, type Actor } from './actor';
import { notFound } from './errors';

/**
 * Reads of calibrator sets for the public API. A set private to its group is invisible to everyone
 * else: it is left out of lists and answers 404, so its name is not leaked.
 */

export async function canSeeCalibratorSet(em: EntityManager, reader: Actor | null, set: CalibratorSetEntity) {
	if (set.visibility === 'public') return true;
	return maySeePrivateOf(em, reader, set.group.id);
}

export async function findVisibleCalibratorSet(em: EntityManager, reader: Actor | null, slug: string) {
	const set = await em.findOne(CalibratorSet, { slug }, { populate: ['group'] });
	if (!set || !(await canSeeCalibratorSet(em, reader, set))) throw notFound(`calibrator set called ${slug}`);
	return set;
}

export async function visibleSetsFilter(
	em: EntityManager,
	reader: Actor | null
): Promise<FilterQuery<CalibratorSetEntity>> {
	if (!readsPrivate(reader)) return { visibility: 'public' };
	if (seesAllAsAdmin(reader)) return {};
	const memberships = await em.find(GroupMembership, { user: reader.id }, { fields: ['group'] });
	const groups = memberships.map((membership) => membership.group.id);
	return groups.length ? { $or: [{ visibility: 'public' }, { group: { $in: groups } }] } : { visibility: 'public' };
}

export interface CalibratorSetListQuery {
	/** Words to find in the slug, title or description (case-insensitive). */
	q: string | null;
	/** Slug of the last set on the previous page. */
	after: string | null;
	limit: number;
}

export interface CalibratorSetSummary {
	set: CalibratorSetEntity;
	revisionCount: number;
	latest: { number: number; digest: string } | null;
}

const likePattern = (text: string) => `%${text.replace(/[\\%_]/g, (char) => `\\${char}`)}%`;

/** One page of the sets the reader may see, by slug, each with its revision count and latest revision. */
export async function listVisibleCalibratorSets(
	em: EntityManager,
	reader: Actor | null,
	query: CalibratorSetListQuery
): Promise<{ items: CalibratorSetSummary[]; nextAfter: string | null }> {
	const conditions: FilterQuery<CalibratorSetEntity>[] = [await visibleSetsFilter(em, reader)];
	if (query.q) {
		const pattern = likePattern(query.q);
		conditions.push({
			$or: [{ slug: { $ilike: pattern } }, { title: { $ilike: pattern } }, { description: { $ilike: pattern } }]
		});
	}
	if (query.after) conditions.push({ slug: { $gt: query.after } });
	const found = await em.find(
		CalibratorSet,
		{ $and: conditions },
		{ orderBy: { slug: 'asc' }, limit: query.limit + 1, populate: ['group'] }
	);
	const page = found.slice(0, query.limit);
	const revisions = page.length
		? await em.find(
				CalibratorRevision,
				{ calibratorSet: { $in: page.map((set) => set.id) } },
				{ fields: ['number', 'digest', 'calibratorSet'], orderBy: { number: 'asc' } }
			)
		: [];
	const bySet = new Map<string, { number: number; digest: string }[]>();
	for (const revision of revisions) {
		const id = revision.calibratorSet.id;
		bySet.set(id, [...(bySet.get(id) ?? []), revision]);
	}
	return {
		items: page.map((set) => {
			const own = bySet.get(set.id) ?? [];
			const last = own.at(-1);
			return {
				set,
				revisionCount: own.length,
				latest: last ? { number: last.number, digest: last.digest } : null
			};
		}),
		nextAfter: found.length > query.limit ? (page.at(-1)?.slug ?? null) : null
	};
}

/** A visible set with every revision (without row content), oldest first, and who uploaded each. */
export async function calibratorSetWithRevisions(em: EntityManager, reader: Actor | null, slug: string) {
	const set = await findVisibleCalibratorSet(em, reader, slug);
	const revisions = await em.find(
		CalibratorRevision,
		{ calibratorSet: set.id },
		{ orderBy: { number: 'asc' }, exclude: ['content'], populate: ['uploadedBy'] }
	);
	return { set, revisions };
}

/** One stored revision of a visible set, with its sealed content. */
export async function findVisibleRevision(
	em: EntityManager,
	reader: Actor | null,
	slug: string,
	number: number
): Promise<{ set: CalibratorSetEntity; revision: CalibratorRevisionEntity }> {
	const set = await findVisibleCalibratorSet(em, reader, slug);
	const revision = await em.findOne(CalibratorRevision, { calibratorSet: set.id, number });
	if (!revision) throw notFound(`revision ${number} of ${slug}`);
	return { set, revision };
}
