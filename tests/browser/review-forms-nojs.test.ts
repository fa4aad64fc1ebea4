import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { AuditEvent } from '../../src/lib/server/entities/index';
import { getSetting, setSetting } from '../../src/lib/server/registry/settings';
import { createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';
import { approve, requestChanges } from './support/review-flow';
import {
	calibratorSet,
	proposal,
	relation,
	resubmit,
	reviewPerson,
	signedInContext,
	type Person
} from './support/review-setup';

/** The review desk's and the settings' forms with JavaScript switched off: plain HTML posts. */
let orm: MikroORM;
let group: string;
let author: Person;
let reviewer: Person;
let set: string;

test.beforeAll(async () => {
	orm = await openOrm();
	group = await createGroupRow(orm, uniqueSlug('review-nojs'));
	author = await reviewPerson(orm, 'nojs author', ['curator'], group);
	reviewer = await reviewPerson(orm, 'nojs reviewer', ['reviewer'], group);
	set = await calibratorSet(author, group);
});

test.afterAll(async () => {
	// Other tests expect the built-in default of one approval.
	await setSetting(orm.em.fork(), null, 'default_required_approvals', 1);
	await orm?.close(true);
});

test('comment, request changes, approve and deprecate without JavaScript', async ({ browser }) => {
	test.setTimeout(90_000);
	const slug = await relation(author, group);
	const id = await proposal(author, { set, revision: 1, relation: slug, title: `No script ${slug}` });
	const context = await signedInContext(browser, orm, reviewer, { javaScriptEnabled: false });
	const page = await context.newPage();

	await page.goto(`/review/${id}`);
	// Without scripts the chart is replaced by its numbers.
	await expect(page.getByTestId('overlay-fallback')).toContainText('the proposal predicts M =');
	await page.getByLabel('Add a comment').fill('A plain `form` post: does the <script>alert(1)</script> stay inert?');
	await page.getByRole('button', { name: 'Post comment' }).click();
	await expect(page).toHaveURL(new RegExp(`/review/${id}\\?done=commented`));
	const thread = page.getByTestId('comment-thread');
	await expect(thread.locator('code')).toHaveText('form');
	await expect(thread.locator('script')).toHaveCount(0);

	// A request for changes needs a reason; the form says so and keeps what was typed.
	await page.getByRole('button', { name: 'Request changes' }).click();
	await expect(page.getByText('a comment is required')).toBeVisible();
	await expect(page.getByLabel('Review comment')).toHaveAttribute('aria-invalid', 'true');

	await requestChanges(page, { proposalId: id, comment: 'Name the clipping threshold in the rationale.' });
	await resubmit(author, id, 'Clipped at 3σ, five iterations.');
	const { ref, digest } = await approve(page, { proposalId: id });
	expect(ref).toBe(`${slug}@1`);
	expect(digest).toMatch(/^sha256:[0-9a-f]{64}$/);

	await page.goto(`/relations/${slug}/versions/1/lifecycle`);
	await expect(page.getByTestId('lifecycle-status')).toHaveText('current');
	// The browser's own check would stop an empty reason; the server's check is what this is about.
	await page.getByLabel('Reason').evaluate((input: HTMLTextAreaElement) => input.removeAttribute('required'));
	await page.getByRole('button', { name: `Deprecate ${slug}@1` }).click();
	await expect(page.getByText('Say why the version should no longer be used.')).toBeVisible();
	await page.getByLabel('Reason').fill('Invented outlier found in the calibrators.');
	await page.getByRole('button', { name: `Deprecate ${slug}@1` }).click();
	await expect(page.getByTestId('lifecycle-status')).toHaveText('deprecated');
	await expect(page.getByTestId('lifecycle-successor')).toHaveText('no successor named');
	await context.close();
});

test('an admin changes the default approvals without JavaScript; the change is audited', async ({ browser }) => {
	const admin = await createPerson(orm, { label: 'settings admin', roles: ['reader', 'admin'] });
	const context = await signedInContext(browser, orm, admin, { javaScriptEnabled: false });
	const page = await context.newPage();

	await page.goto('/admin/settings');
	const field = page.getByLabel('Default number of approvals');
	await expect(field).toHaveValue(String(await getSetting(orm.em.fork(), 'default_required_approvals')));
	await field.fill('0');
	// The browser's own check would stop 0; the server's check is what this test is about.
	await field.evaluate((input: HTMLInputElement) => input.removeAttribute('min'));
	await page.getByRole('button', { name: 'Save settings' }).click();
	await expect(page.getByText('At least one reviewer must approve.')).toBeVisible();
	expect(await getSetting(orm.em.fork(), 'default_required_approvals')).not.toBe(0);

	await page.getByLabel('Default number of approvals').fill('3');
	await page.getByRole('button', { name: 'Save settings' }).click();
	await expect(page.getByText('Saved: new relations need 3 approval(s) by default.')).toBeVisible();
	await expect(page.getByLabel('Default number of approvals')).toHaveValue('3');
	await expect(page.getByTestId('setting-last-changed')).toContainText(admin.displayName);
	expect(await getSetting(orm.em.fork(), 'default_required_approvals')).toBe(3);
	const event = await orm.em
		.fork()
		.findOneOrFail(AuditEvent, { kind: 'setting-changed', actorId: admin.id }, { orderBy: { id: 'desc' } });
	expect(event).toMatchObject({ subject: 'default_required_approvals', detail: { value: 3 } });

	// The audit browser finds it by kind and actor.
	await page.goto(`/admin/audit?kind=setting-changed&actor=${encodeURIComponent(admin.email)}`);
	await expect(page.getByTestId('audit-count')).toContainText('1 event match');
	await expect(page.getByTestId('audit-table')).toContainText(admin.displayName);

	await page.goto('/admin/settings');
	await page.getByLabel('Default number of approvals').fill('1');
	await page.getByRole('button', { name: 'Save settings' }).click();
	await expect(page.getByText('Saved: new relations need 1 approval(s) by default.')).toBeVisible();
	await context.close();
});

test('the audit log filters by subject and date and pages through the results', async ({ browser }) => {
	const admin = await createPerson(orm, { label: 'audit admin', roles: ['reader', 'admin'] });
	const subject = uniqueSlug('audit-paging');
	const em = orm.em.fork();
	for (let i = 0; i < 57; i++) {
		em.create(AuditEvent, {
			kind: 'relation-watched',
			occurredAt: new Date(Date.UTC(2026, 0, 1 + (i % 3))),
			actorId: admin.id,
			subject: `${subject}-${i}`,
			clientAddress: null,
			detail: { i }
		});
	}
	await em.flush();
	const context = await signedInContext(browser, orm, admin, { javaScriptEnabled: false });
	const page = await context.newPage();

	await page.goto('/admin/audit');
	await page.getByLabel('Subject contains').fill(subject);
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(page.getByTestId('audit-count')).toHaveText('57 events match · page 1 of 2');
	await expect(page.getByTestId('audit-table').locator('tbody tr')).toHaveCount(50);
	await page.getByRole('link', { name: 'Older' }).click();
	await expect(page.getByTestId('audit-count')).toHaveText('57 events match · page 2 of 2');
	await expect(page.getByTestId('audit-table').locator('tbody tr')).toHaveCount(7);

	// One UTC day holds every third event: 19 of 57.
	await page.getByLabel('From (UTC day)').fill('2026-01-02');
	await page.getByLabel('To (UTC day, inclusive)').fill('2026-01-02');
	await page.getByRole('button', { name: 'Filter' }).click();
	await expect(page.getByTestId('audit-count')).toHaveText('19 events match · page 1 of 1');

	await page.goto(`/admin/audit?from=2026-13-40`);
	await expect(page.getByRole('alert')).toContainText('from:');
	await context.close();
});
