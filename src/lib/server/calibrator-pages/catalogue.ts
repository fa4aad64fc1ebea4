import type { EntityManager } from '@mikro-orm/postgresql';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { Group } from '../entities/index';
import { groupsOf } from '../accounts/group-service';
import type { Actor } from '../registry/actor';
import { visibleSetsFilter } from '../registry/calibrator-set-reads';

/** The calibrator-set list: each set with its revision count and newest digest. */
export interface CalibratorSetSummary {
	slug: string;
	title: string;
	licence: string;
	group: string;
	revisions: number;
	latestRevision: number | null;
	latestDigest: string | null;
	latestAt: string | null;
}

export async function listCalibratorSets(em: EntityManager, reader: Actor | null): Promise<CalibratorSetSummary[]> {
	const sets = await em.find(CalibratorSet, await visibleSetsFilter(em, reader), {
		populate: ['group'],
		orderBy: { title: 'asc' },
		limit: 500
	});
	if (sets.length === 0) return [];
	const revisions = await em.find(
		CalibratorRevision,
		{ calibratorSet: { $in: sets.map((set) => set.id) } },
		{ fields: ['calibratorSet', 'number', 'digest', 'createdAt', 'rowCount'], orderBy: { number: 'asc' } }
	);
	return sets.map((set) => {
		const own = revisions.filter((revision) => revision.calibratorSet.id === set.id);
		const latest = own.at(-1) ?? null;
		return {
			slug: set.slug,
			title: set.title,
			licence: set.licence,
			group: set.group.slug,
			revisions: own.length,
			latestRevision: latest?.number ?? null,
			latestDigest: latest?.digest ?? null,
			latestAt: latest?.createdAt.toISOString() ?? null
		};
	});
}

/** Sets with at least one revision, for choosing what to fit. */
export async function fittableRevisions(em: EntityManager, reader: Actor | null) {
	const revisions = await em.find(
		CalibratorRevision,
		{ calibratorSet: await visibleSetsFilter(em, reader) },
		{
			populate: ['calibratorSet'],
			fields: ['number', 'digest', 'rowCount', 'calibratorSet.slug', 'calibratorSet.title'],
			orderBy: { calibratorSet: { title: 'asc' }, number: 'desc' },
			limit: 1000
		}
	);
	return revisions.map((revision) => ({
		set: revision.calibratorSet.slug,
		title: revision.calibratorSet.title,
		revision: revision.number,
		digest: revision.digest,
		rows: revision.rowCount
	}));
}

/** Groups the person may create sets and relations for (all of them for an admin). */
export async function groupChoices(em: EntityManager, user: { id: string; roles: readonly string[] }) {
	if (user.roles.includes('admin')) {
		const groups = await em.find(Group, {}, { orderBy: { name: 'asc' } });
		return groups.map((group) => ({ slug: group.slug, name: group.name }));
	}
	const memberships = await groupsOf(em, user.id);
	return memberships.map((membership) => ({ slug: membership.group.slug, name: membership.group.name }));
}
