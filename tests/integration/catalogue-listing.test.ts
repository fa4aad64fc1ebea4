import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { EMPTY_FILTER, type CatalogueFilter } from '../../src/lib/catalogue/filters';
import { relationVersionDigest } from '../../src/lib/calibration/index';
import { listCatalogue } from '../../src/lib/server/catalogue/relation-listing';
import { loadRelationView } from '../../src/lib/server/catalogue/relation-view';
import type { FrozenContent } from '../../src/lib/server/catalogue/refit-version';
import { reproduceVersion } from '../../src/lib/server/registry/reproduce';
import { RelationVersion } from '../../src/lib/server/entities/index';
import type { Actor } from '../../src/lib/server/registry/actor';
import { createCalibratorSet, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { RegistryError } from '../../src/lib/server/registry/errors';
import { requestFit } from '../../src/lib/server/registry/fits';
import { withoutRegistryMail } from '../../src/lib/server/registry/notifications';
import { createProposal, reviewProposal } from '../../src/lib/server/registry/proposals';
import { createRelation } from '../../src/lib/server/registry/relations';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { deprecateVersion } from '../../src/lib/server/registry/versions';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	HOST_FIT,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

/**
 * The catalogue list and the relation view against real PostgreSQL: who sees which relation and
 * version (private relations and embargoes), the derived state, filters and paging, and the refit
 * that reproduces a frozen digest.
 */
let orm: MikroORM;
let store: TestObjectStore;
let member: Actor;
let reviewer: Actor;
let outsider: Actor;
const tag = unique('cat').replace(/-/g, '');
const slugs = {
	active: `${tag}-active`,
	private: `${tag}-private`,
	embargoed: `${tag}-embargoed`,
	proposed: `${tag}-proposed`,
	retired: `${tag}-retired`
};
let setSlug: string;
let groupSlug: string;

async function relationWithVersion(slug: string, visibility: 'public' | 'group', embargoUntil: Date | null) {
	await createRelation(orm.em.fork(), member, {
		slug,
		title: `Catalogue ${slug}`,
		description: '',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchorType: 'geometric_host',
		group: groupSlug,
		visibility,
		requiredApprovals: 1,
		magnitudeSystem: null
	});
	if (slug === slugs.proposed) return;
	const fit = await requestFit(
		orm.em.fork(),
		member,
		FitRequestSchema.parse({ calibrator_set: setSlug, revision: 1, ...HOST_FIT }),
		null
	);
	const proposal = await createProposal(orm.em.fork(), member, slug, {
		fit: fit.job.id,
		title: 'First',
		rationale: 'Invented.',
		embargoUntil,
		submit: true
	});
	await reviewProposal(orm.em.fork(), reviewer, proposal.id, 'approve', 'Fine.');
}

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'catalogue');
	groupSlug = group.slug;
	member = await createActor(orm, 'member', ['reader', 'curator'], [{ groupId: group.id, standing: 'member' }]);
	reviewer = await createActor(orm, 'reviewer', ['reader', 'reviewer'], [{ groupId: group.id, standing: 'member' }]);
	outsider = await createActor(orm, 'outsider', ['reader']);
	setSlug = unique('catalogue-set');
	await createCalibratorSet(orm.em.fork(), member, {
		slug: setSlug,
		title: 'Invented',
		description: '',
		group: group.slug,
		licence: 'CC0-1.0',
		citations: ['Invented 2026']
	});
	await uploadRevision(orm.em.fork(), store.storage, member, setSlug, {
		bytes: new TextEncoder().encode(hostCalibratorCsv({ count: 30, seed: 3 })),
		mediaType: 'text/csv',
		fileName: 'host.csv',
		mapping: {},
		note: ''
	});
	await withoutRegistryMail(async () => {
		await relationWithVersion(slugs.active, 'public', null);
		await relationWithVersion(slugs.private, 'group', null);
		await relationWithVersion(slugs.embargoed, 'public', new Date(Date.now() + 30 * 86_400_000));
		await relationWithVersion(slugs.proposed, 'public', null);
		await relationWithVersion(slugs.retired, 'public', null);
		await deprecateVersion(orm.em.fork(), reviewer, slugs.retired, 1, { reason: 'Invented reason.', successor: null });
	});
}, 60_000);

afterAll(async () => {
	await store?.close();
	await orm?.close(true);
});

const list = (actor: Actor | null, filter: Partial<CatalogueFilter> = {}) =>
	listCatalogue(orm.em.fork(), actor, { ...EMPTY_FILTER, q: tag, sort: 'title', ...filter });

describe('the catalogue list', () => {
	test('visitors see public relations; embargoed versions count only for the group', async () => {
		const anonymous = await list(null);
		expect(
			anonymous.items.map((item) => [item.slug, item.state, item.current?.version ?? null, item.version_count])
		).toEqual([
			[slugs.active, 'active', 1, 1],
			[slugs.embargoed, 'proposed', null, 0],
			[slugs.proposed, 'proposed', null, 0],
			[slugs.retired, 'retired', null, 1]
		]);
		expect((await list(outsider)).items.map((item) => item.slug)).not.toContain(slugs.private);

		const inside = await list(member);
		const bySlug = new Map(inside.items.map((item) => [item.slug, item]));
		expect(bySlug.get(slugs.private)).toMatchObject({ state: 'active', visibility: 'group' });
		expect(bySlug.get(slugs.embargoed)).toMatchObject({ state: 'active', version_count: 1 });
		const stored = await orm.em.fork().findOneOrFail(RelationVersion, { relation: { slug: slugs.active }, number: 1 });
		expect(bySlug.get(slugs.active)!.current).toEqual({ version: 1, ref: `${slugs.active}@1`, digest: stored.digest });
	});

	test('filters by state and pages with a cursor without repeating a row', async () => {
		expect((await list(member, { state: 'retired' })).items.map((item) => item.slug)).toEqual([slugs.retired]);
		expect((await list(member, { band: 'V' })).items).toEqual([]);
		const first = await list(member, { limit: 2 });
		expect(first.items).toHaveLength(2);
		expect(first.next_cursor).not.toBeNull();
		const second = await list(member, { limit: 2, cursor: first.next_cursor });
		const third = await list(member, { limit: 2, cursor: second.next_cursor });
		const seen = [...first.items, ...second.items, ...third.items].map((item) => item.slug);
		expect(seen).toEqual(Object.values(slugs).sort());
		expect(third.next_cursor).toBeNull();
		const descending = await list(member, { sort: '-title' });
		expect(descending.items.map((item) => item.slug)).toEqual(Object.values(slugs).sort().reverse());
	});
});

describe('the relation view', () => {
	test('answers 404 for a private relation or an embargoed version the viewer may not see', async () => {
		await expect(loadRelationView(orm.em.fork(), outsider, slugs.private, null, 'http://x')).rejects.toMatchObject({
			status: 404
		});
		const publicView = await loadRelationView(orm.em.fork(), null, slugs.embargoed, null, 'http://x');
		expect(publicView.timeline).toEqual([]);
		expect(publicView.selected).toBeNull();
		await expect(loadRelationView(orm.em.fork(), null, slugs.embargoed, 1, 'http://x')).rejects.toBeInstanceOf(
			RegistryError
		);
		const memberView = await loadRelationView(orm.em.fork(), member, slugs.embargoed, null, 'http://x');
		expect(memberView.selected?.entry).toMatchObject({ version: 1, embargoed: true });
	});

	test('plots every calibrator of the revision and reproduces the frozen digest', async () => {
		const view = await loadRelationView(orm.em.fork(), null, slugs.active, null, 'http://x');
		const content = view.selected!.content as FrozenContent;
		const points = view.selected!.points!;
		expect(points.filter((point) => point.used)).toHaveLength(content.n_used);
		expect(
			points
				.filter((point) => !point.used)
				.map((point) => point.star)
				.sort()
		).toEqual(content.rejected.map((rejection) => rejection.star).sort());
		expect(view.selected!.citation).toMatchObject({
			slug: slugs.active,
			version: 1,
			digest: content.digest,
			requiredCitations: ['Invented 2026']
		});
		const outcome = await reproduceVersion(orm.em.fork(), null, slugs.active, 1);
		expect(outcome).toMatchObject({ digestMatches: true, differences: [], maxRelativeDifference: 0 });
		const { digest, ...frozen } = content;
		expect(relationVersionDigest(frozen)).toBe(digest);
		expect(outcome.recomputedDigest).toBe(digest);
	});
});
