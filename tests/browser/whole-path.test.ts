import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { relationVersionDigest, type RelationVersionContent } from '../../src/lib/calibration/index';
import { RelationVersion } from '../../src/lib/server/entities/index';
import { createGroupRow, openOrm, uniqueSlug } from './support/accounts';
import { fitAndPropose, reviseProposal, uploadThroughWizard } from './support/curator-flow';
import { approve, requestChanges } from './support/review-flow';
import { api, hostCsv, relation, reviewPerson, signedInContext, type Person } from './support/review-setup';

/**
 * The whole path through the screens, as two people work it: a curator uploads a calibrator set
 * through the wizard, fits and proposes; a reviewer asks for changes; the curator revises; the
 * reviewer approves; the new version then shows on its page with the digest anyone can recompute.
 */
let orm: MikroORM;
let group: string;
let curator: Person;
let reviewer: Person;

test.beforeAll(async () => {
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('whole-path'));
	curator = await reviewPerson(orm, 'path curator', ['curator'], group);
	reviewer = await reviewPerson(orm, 'path reviewer', ['reviewer'], group);
});

test.afterAll(async () => {
	await orm?.close(true);
});

test('upload, fit, propose, request changes, revise, approve: the new version shows with its digest', async ({
	browser
}) => {
	test.setTimeout(180_000);
	const setSlug = uniqueSlug('path-set');
	const created = await api(curator.token, 'POST', '/api/v1/calibrator-sets', {
		slug: setSlug,
		title: 'Invented host Cepheids for the whole path',
		group,
		licence: 'CC0-1.0',
		citations: ['Invented 2026']
	});
	expect(created.status).toBe(201);
	const relationSlug = await relation(curator, group);

	const curatorContext = await signedInContext(browser, orm, curator);
	const reviewerContext = await signedInContext(browser, orm, reviewer);
	const curatorPage = await curatorContext.newPage();
	const reviewerPage = await reviewerContext.newPage();

	const { revision } = await uploadThroughWizard(curatorPage, { setSlug, csv: hostCsv(1) });
	expect(revision).toBe(1);
	const { proposalId } = await fitAndPropose(curatorPage, {
		relationSlug,
		setSlug,
		revision,
		rationale: 'First fit of the invented host set.'
	});

	await requestChanges(reviewerPage, { proposalId, comment: 'Please state the clipping threshold in the rationale.' });

	await curatorPage.goto(`/review/${proposalId}`);
	await expect(curatorPage.getByText('Please state the clipping threshold in the rationale.')).toBeVisible();
	await reviseProposal(curatorPage, {
		relationSlug,
		proposalId,
		rationale: 'First fit of the invented host set, clipped at 3σ for at most five rounds.'
	});

	const frozen = await approve(reviewerPage, { proposalId, comment: 'Thank you.' });
	expect(frozen.ref).toBe(`${relationSlug}@1`);

	// The digest the page shows is the stored one, and it recomputes from the frozen content by the rule.
	const stored = await orm.em.fork().findOneOrFail(RelationVersion, { digest: frozen.digest });
	expect(relationVersionDigest(stored.content as unknown as RelationVersionContent)).toBe(frozen.digest);

	await curatorPage.goto(`/relations/${relationSlug}/versions/1`);
	await expect(curatorPage.getByText(frozen.digest).first()).toBeVisible();
	await curatorPage.goto(`/relations/${relationSlug}`);
	await expect(curatorPage.getByText(frozen.digest).first()).toBeVisible();

	await curatorContext.close();
	await reviewerContext.close();
});
