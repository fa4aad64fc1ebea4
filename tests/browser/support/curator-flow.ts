import { expect, type Page } from '@playwright/test';

/**
 * A curator's path through the calibrator screens, as reusable steps. Each step works with scripts on
 * or off: every button is a real form submission, which the page enhances when scripts run.
 */
export async function uploadThroughWizard(
	page: Page,
	opts: { setSlug: string; csv: string; fileName?: string }
): Promise<{ revision: number }> {
	await page.goto(`/calibrator-sets/${opts.setSlug}/upload`);
	await page.getByLabel('Calibrator table').setInputFiles({
		name: opts.fileName ?? 'calibrators.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from(opts.csv, 'utf8')
	});
	await page.getByRole('button', { name: 'Read the file' }).click();
	await expect(page.getByTestId('column-mapping')).toBeVisible();
	await page.getByRole('button', { name: 'Check the table' }).click();
	await expect(page.getByTestId('upload-counts')).toBeVisible();
	await page.getByRole('button', { name: 'Commit revision' }).click();
	await page.waitForURL(/\/calibrator-sets\/[^/]+\?uploaded=\d+/);
	const revision = Number(new URL(page.url()).searchParams.get('uploaded'));
	await expect(page.locator(`tr[data-revision="${revision}"]`)).toBeVisible();
	return { revision };
}

async function saveAndSubmit(page: Page, rationale: string, title?: string): Promise<string> {
	const editor = page.getByTestId('proposal-form');
	if (title !== undefined) await editor.getByLabel('Proposal title').fill(title);
	await editor.getByLabel('Rationale (Markdown)').fill(rationale);
	await editor.getByRole('button', { name: /^Save/ }).click();
	await page.waitForURL(/[?&]saved=1/);
	const proposalId = new URL(page.url()).searchParams.get('proposal');
	if (!proposalId) throw new Error('saving did not lead to the proposal');
	await page.getByRole('button', { name: 'Submit for review' }).click();
	await page.waitForURL(/[?&]submitted=1/);
	await expect(page.getByRole('heading', { name: 'Proposal (in review)' })).toBeVisible();
	return proposalId;
}

export async function fitAndPropose(
	page: Page,
	opts: { relationSlug: string; setSlug: string; revision: number; rationale: string }
): Promise<{ proposalId: string }> {
	const revision = `${opts.setSlug}@${opts.revision}`;
	await page.goto(`/relations/${opts.relationSlug}/refit?set=${encodeURIComponent(revision)}`);
	await expect(page.getByLabel('Calibrator revision')).toHaveValue(revision);
	await page.getByRole('button', { name: 'Run the fit' }).click();
	await expect(page.getByTestId('zero-point')).toBeVisible({ timeout: 30_000 });
	const proposalId = await saveAndSubmit(page, opts.rationale, `Refit from ${revision}`);
	return { proposalId };
}

export async function reviseProposal(
	page: Page,
	opts: { relationSlug: string; proposalId: string; rationale: string }
): Promise<void> {
	await page.goto(`/relations/${opts.relationSlug}/refit?proposal=${opts.proposalId}`);
	await expect(page.getByTestId('zero-point')).toBeVisible({ timeout: 30_000 });
	const id = await saveAndSubmit(page, opts.rationale);
	expect(id).toBe(opts.proposalId);
}
