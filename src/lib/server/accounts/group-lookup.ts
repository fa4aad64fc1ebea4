import type { EntityManager } from '@mikro-orm/postgresql';
import type { GroupStanding } from '../entities/index';
import { standingIn } from './group-service';

/** Standing for the access policy: routes without a group parameter have no group to be in. */
export function groupStandingFor(
	em: EntityManager,
	userId: string,
	slug: string | undefined
): Promise<GroupStanding | null> {
	return slug ? standingIn(em, userId, slug) : Promise.resolve(null);
}
