import type { EntityManager } from '@mikro-orm/postgresql';
import { LockMode } from '@mikro-orm/core';
import { type RelationVersionContent } from '../../calibration/index';
import { User } from '../entities/index';
import type { OutgoingMail } from '../mail/mailer';
import { Relation, type RelationEntity } from '../entities/relation.entity';
import { RelationVersion, type RelationVersionEntity } from '../entities/relation-version.entity';
import {
	VersionLifecycle,
	type VersionLifecycleEntity,
	type VersionStatus
} from '../entities/version-lifecycle.entity';
import { hasRole, isAdmin, maySeePrivateOf, standingInGroup, type Actor } from './actor';
import { auditRegistry } from './audit';
import { conflict, forbidden, invalid, notFound } from './errors';
import { deliverHeldMail, deliver, mailWatchers, versionMail } from './notifications';
import { findVisibleRelation } from './relations';
import { standingsFor } from './version-standing';

/**
 * Versions: frozen content (insert-only) plus a mutable lifecycle. `current` is the newest version that
 * is not deprecated; every other version that is not deprecated is superseded.
 */

export function isEmbargoed(lifecycle: Pick<VersionLifecycleEntity, 'embargoUntil' | 'releasedAt'>, now = new Date()) {
	return !!lifecycle.embargoUntil && !lifecycle.releasedAt && lifecycle.embargoUntil.getTime() > now.getTime();
}

/** Sets current / superseded from the deprecations; call inside the transaction that changed them. */
export async function recomputeStatuses(em: EntityManager, relationId: string): Promise<void> {
	const lifecycles = await em.find(VersionLifecycle, { relation: relationId }, { orderBy: { number: 'desc' } });
	let currentSeen = false;
	for (const lifecycle of lifecycles) {
		if (lifecycle.status === 'deprecated') continue;
		lifecycle.status = currentSeen ? 'superseded' : 'current';
		currentSeen = true;
	}
	await em.flush();
}

/** Inserts the frozen version and its lifecycle; the caller holds the relation's lock. */
export async function freezeVersion(
	em: EntityManager,
	relation: RelationEntity,
	content: RelationVersionContent & { digest: string },
	proposalId: string | null,
	embargoUntil: Date | null
): Promise<RelationVersionEntity> {
	const id = crypto.randomUUID();
	const version = em.create(RelationVersion, {
		id,
		relation,
		number: content.version,
		digest: content.digest,
		content: content as unknown as Record<string, unknown>,
		proposalId
	});
	em.create(VersionLifecycle, {
		id,
		relation,
		number: content.version,
		status: 'current',
		embargoUntil: relation.visibility === 'public' ? embargoUntil : null
	});
	await em.flush();
	await recomputeStatuses(em, relation.id);
	return version;
}

export async function latestVersionNumber(em: EntityManager, relationId: string): Promise<number> {
	const last = await em.findOne(
		RelationVersion,
		{ relation: relationId },
		{ orderBy: { number: 'desc' }, fields: ['number'] }
	);
	return last?.number ?? 0;
}

/** Whether the actor may see this version (embargoed versions: the owning group and admins). */
export async function canSeeVersion(
	em: EntityManager,
	actor: Actor | null,
	relation: RelationEntity,
	lifecycle: VersionLifecycleEntity
): Promise<boolean> {
	if (!isEmbargoed(lifecycle)) return true;
	return maySeePrivateOf(em, actor, relation.group.id);
}

export async function findVersion(em: EntityManager, actor: Actor | null, slug: string, number: number) {
	const relation = await findVisibleRelation(em, actor, slug);
	const [version, lifecycle] = await Promise.all([
		em.findOne(RelationVersion, { relation, number }),
		em.findOne(VersionLifecycle, { relation, number })
	]);
	if (!version || !lifecycle || !(await canSeeVersion(em, actor, relation, lifecycle)))
		throw notFound(`version ${number} of ${slug}`);
	return { relation, version, lifecycle };
}

/**
 * The versions the actor may see, oldest first, with how each stands for the actor: worked out over
 * the visible ones only, so no reader is told of a newer version hidden by its embargo.
 */
export async function listVersions(em: EntityManager, actor: Actor | null, slug: string) {
	const relation = await findVisibleRelation(em, actor, slug);
	const all = await em.find(VersionLifecycle, { relation }, { orderBy: { number: 'asc' } });
	const member = await maySeePrivateOf(em, actor, relation.group.id);
	const lifecycles = all.filter((lifecycle) => member || !isEmbargoed(lifecycle));
	return { relation, lifecycles, standings: standingsFor(lifecycles) };
}

/** A successor as a reader may be told of it: null when that version is hidden from them. */
export function visibleOrNull(standings: ReadonlyMap<number, VersionStatus>, successor: number | null | undefined) {
	return successor !== null && successor !== undefined && standings.has(successor) ? successor : null;
}

export interface DeprecateInput {
	reason: string;
	successor: number | null;
}

/** A reviewer or admin deprecates a version with a reason and a successor; it is never deleted. */
export async function deprecateVersion(
	em: EntityManager,
	actor: Actor,
	slug: string,
	number: number,
	input: DeprecateInput
) {
	const { relation } = await findVersion(em, actor, slug, number);
	if (!hasRole(actor, 'reviewer') && !isAdmin(actor)) throw forbidden('Only reviewers and admins deprecate versions.');
	const mails: OutgoingMail[] = [];
	const lifecycle = await em.transactional(async (tx) => {
		await tx.findOneOrFail(Relation, relation.id, { lockMode: LockMode.PESSIMISTIC_WRITE });
		const lifecycle = await tx.findOneOrFail(VersionLifecycle, { relation: relation.id, number }, { refresh: true });
		if (lifecycle.status === 'deprecated')
			throw conflict('already-deprecated', `${slug}@${number} is already deprecated.`);
		if (input.successor !== null) {
			const successor = await tx.findOne(VersionLifecycle, { relation: relation.id, number: input.successor });
			if (!successor || input.successor === number || successor.status === 'deprecated') {
				throw invalid('The successor must be another version of this relation that is not deprecated.', [
					{ path: 'successor', message: 'not a usable version' }
				]);
			}
		}
		lifecycle.status = 'deprecated';
		lifecycle.deprecatedAt = new Date();
		lifecycle.deprecatedBy = tx.getReference(User, actor.id);
		lifecycle.deprecationReason = input.reason;
		lifecycle.successorNumber = input.successor;
		await tx.flush();
		await recomputeStatuses(tx, relation.id);
		await auditRegistry(tx, 'version-deprecated', actor, `${slug}@${number}`, {
			reason: input.reason,
			successor: input.successor
		});
		const version = await tx.findOneOrFail(RelationVersion, { relation: relation.id, number });
		mails.push(
			...(await mailWatchers(tx, relation, lifecycle, isEmbargoed(lifecycle), (to) =>
				versionMail(to, `${slug}@${number}`, version.digest, 'deprecated', input.reason)
			))
		);
		return lifecycle;
	});
	await deliver(mails);
	return lifecycle;
}

/** A manager of the owning group (or an admin) releases an embargoed version before its date. */
export async function releaseVersion(em: EntityManager, actor: Actor, slug: string, number: number) {
	const { relation, lifecycle } = await findVersion(em, actor, slug, number);
	if (!isAdmin(actor) && (await standingInGroup(em, actor, relation.group.id)) !== 'manager')
		throw forbidden(`Only managers of ${relation.group.slug} release its embargoed versions.`);
	if (!isEmbargoed(lifecycle)) throw conflict('not-embargoed', `${slug}@${number} is not under embargo.`);
	lifecycle.releasedAt = new Date();
	lifecycle.releasedBy = em.getReference(User, actor.id);
	await em.flush();
	await auditRegistry(em, 'version-released', actor, `${slug}@${number}`, {
		embargoUntil: lifecycle.embargoUntil?.toISOString() ?? null
	});
	// Watchers outside the group now hear of the version (and of anything else whose embargo ended).
	await deliverHeldMail(em.fork());
	return lifecycle;
}
