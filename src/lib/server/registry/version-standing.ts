import type { VersionStatus } from '../entities/version-lifecycle.entity';
import { readsPrivate, seesAllAsAdmin, type Actor } from './actor';

/**
 * How a relation's versions stand for one viewer. An embargoed version is invisible to whoever may not
 * see it, so standings are worked out over the visible versions only: the newest visible version that
 * is not deprecated is current for that viewer. Otherwise a public reader would see version 1 called
 * "superseded" by a version they cannot see, which leaks that it exists.
 */
export type RelationState = 'active' | 'proposed' | 'retired';

export interface VisibleLifecycle {
	number: number;
	status: VersionStatus;
}

export function standingsFor<T extends VisibleLifecycle>(visible: readonly T[]): Map<number, VersionStatus> {
	const standings = new Map<number, VersionStatus>();
	let currentSeen = false;
	for (const lifecycle of [...visible].sort((a, b) => b.number - a.number)) {
		if (lifecycle.status === 'deprecated') {
			standings.set(lifecycle.number, 'deprecated');
			continue;
		}
		standings.set(lifecycle.number, currentSeen ? 'superseded' : 'current');
		currentSeen = true;
	}
	return standings;
}

/** `active` with a current version, `proposed` before any approval, `retired` when every version is deprecated. */
export function relationState(versionCount: number, hasCurrent: boolean): RelationState {
	if (hasCurrent) return 'active';
	return versionCount === 0 ? 'proposed' : 'retired';
}

/**
 * The viewer as the catalogue's SQL needs it: null id for the public view, which is also what a token
 * without read:private gets (see maySeePrivateOf in actor.ts).
 */
export interface Viewer {
	userId: string | null;
	admin: boolean;
}

export const viewerOf = (actor: Actor | null): Viewer => ({
	userId: readsPrivate(actor) ? actor.id : null,
	admin: seesAllAsAdmin(actor)
});
