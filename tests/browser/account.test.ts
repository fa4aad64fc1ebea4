import type { MikroORM } from '@mikro-orm/postgresql';
import { expect, test } from '@playwright/test';
import { capturedMailTo } from './support/captured-mail';
import { createGroupRow, createPerson, openOrm, uniqueSlug } from './support/accounts';

const PASSWORD = 'browser test password';
let orm: MikroORM;

test.beforeAll(async () => {
	orm = await openOrm();
});

test.afterAll(async () => {
	await orm.close(true);
});

test('sign in through the form, see the account page, make and revoke a token, sign out', async ({ page, request }) => {
	const person = await createPerson(orm, { label: 'signin', roles: ['reader', 'curator'], password: PASSWORD });

	await page.goto('/');
	await page.getByRole('navigation', { name: 'Account' }).getByRole('link', { name: 'Sign in' }).click();
	await page.getByLabel('E-mail address').fill(person.email);
	await page.getByLabel('Password').fill('not the password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('alert')).toContainText('do not match an account');

	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/account$/);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(person.displayName);
	await expect(page.getByText('roles: reader, curator')).toBeVisible();
	await expect(page.getByText('this browser')).toBeVisible();

	const cookie = (await page.context().cookies()).find((c) => c.name === 'candlebook_session');
	expect(cookie).toMatchObject({ httpOnly: true, sameSite: 'Lax' });

	await page.getByLabel('Token name').fill('reduction pipeline');
	await page.getByRole('checkbox', { name: /read:private/ }).check();
	await page.getByRole('button', { name: 'Create token' }).click();
	const secret = (await page.getByTestId('new-token').textContent())!.trim();
	expect(secret).toMatch(/^cbk_/);

	const me = await request.get('/api/v1/me', { headers: { authorization: `Bearer ${secret}` } });
	expect(me.status()).toBe(200);
	expect(await me.json()).toMatchObject({
		email: person.email,
		authenticated_by: 'token',
		token_scopes: ['read:private']
	});

	await page.getByRole('button', { name: 'Revoke reduction pipeline' }).click();
	await expect(page.getByText('revoked', { exact: true })).toBeVisible();
	const after = await request.get('/api/v1/me', { headers: { authorization: `Bearer ${secret}` } });
	expect(after.status()).toBe(401);
	expect(after.headers()['content-type']).toContain('application/problem+json');

	await page.getByRole('navigation', { name: 'Account' }).getByRole('button', { name: 'Sign out' }).click();
	await expect(page).toHaveURL(/\/$/);
	await expect(page.getByRole('navigation', { name: 'Account' }).getByRole('link', { name: 'Sign in' })).toBeVisible();
	await page.goto('/account');
	await expect(page).toHaveURL(/\/sign-in\?next=%2Faccount$/);
});

test('the sign-in form works without JavaScript', async ({ browser }) => {
	const person = await createPerson(orm, { label: 'nojs', roles: ['reader'], password: PASSWORD });
	const context = await browser.newContext({ javaScriptEnabled: false });
	const page = await context.newPage();
	await page.goto('/sign-in');
	await page.getByLabel('E-mail address').fill(person.email);
	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/account$/);
	await expect(page.getByRole('heading', { level: 1 })).toHaveText(person.displayName);
	await context.close();
});

test('an admin invites someone; the mail is on the captured-mail page; its link sets a password', async ({
	browser
}) => {
	const group = await createGroupRow(orm, uniqueSlug('invite'));
	const admin = await createPerson(orm, { label: 'admin', roles: ['reader', 'admin'], password: PASSWORD });
	const adminContext = await browser.newContext();
	const adminPage = await adminContext.newPage();
	await adminPage.goto('/sign-in?next=/admin/users');
	await adminPage.getByLabel('E-mail address').fill(admin.email);
	await adminPage.getByLabel('Password').fill(PASSWORD);
	await adminPage.getByRole('button', { name: 'Sign in' }).click();
	await expect(adminPage.getByRole('heading', { level: 1 })).toHaveText('People');

	const invitee = `${uniqueSlug('newcomer')}@browser.test`;
	const inviteForm = adminPage.locator('form[action="?/invite"]');
	await inviteForm.getByLabel('E-mail address').fill(invitee);
	await inviteForm.getByLabel('Name').fill('Newcomer Person');
	await inviteForm.getByLabel('reviewer').check();
	await inviteForm.getByLabel(`Group ${group}`).check();
	await inviteForm.getByRole('button', { name: 'Send invitation' }).click();
	await expect(adminPage.getByText(`Invitation sent to ${invitee}.`)).toBeVisible();

	const mail = await capturedMailTo(invitee);
	expect(mail.subject).toBe('You are invited to Candlebook');
	await adminPage.goto('/admin/mail');
	await expect(adminPage.getByText(`to ${invitee}`)).toBeVisible();
	await adminContext.close();

	const link = /http:\/\/\S+\/invitation\?token=[a-z0-9]+/.exec(mail.text)![0];
	const context = await browser.newContext();
	const page = await context.newPage();
	await page.goto(link);
	await page.getByLabel('New password').fill('a fresh invitee password');
	await page.getByLabel('The same password again').fill('a fresh invitee password');
	await page.getByRole('button', { name: 'Set password' }).click();
	await expect(page.getByText('Your password is set.')).toBeVisible();
	await page.getByLabel('E-mail address').fill(invitee);
	await page.getByLabel('Password').fill('a fresh invitee password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByText('roles: reader, reviewer')).toBeVisible();
	await expect(page.getByRole('link', { name: `Group ${group}` })).toBeVisible();

	// The link worked once.
	await page.goto(link);
	await expect(page.getByText('has been used or has expired')).toBeVisible();
	await context.close();
});
