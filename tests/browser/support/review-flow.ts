import { expect, type Page } from '@playwright/test';

/**
 * Proposal-page actions as reviewers and authors perform them, for any test that walks the whole path.
 * The page must belong to a context signed in as someone who may take the step.
 */

async function decide(
	page: Page,
	proposalId: string,
	button: 'Approve' | 'Request changes',
	comment: string,
	done: string
) {
	await page.goto(`/review/${proposalId}`);
	await page.getByLabel('Review comment').fill(comment);
	await press(page, proposalId, button, done);
}

/** Clicks a proposal page's button and waits for the page that says it went through. */
async function press(page: Page, proposalId: string, button: string, done: string) {
	await page.getByRole('button', { name: button, exact: true }).click();
	try {
		await page.waitForURL(new RegExp(`/review/${proposalId}\\?done=${done}`), { timeout: 15_000 });
	} catch {
		const alert = await page.getByRole('alert').allInnerTexts();
		throw new Error(`${button} on proposal ${proposalId} did not go through: ${alert.join(' ') || 'no message shown'}`);
	}
}

export async function requestChanges(page: Page, opts: { proposalId: string; comment: string }): Promise<void> {
	await decide(page, opts.proposalId, 'Request changes', opts.comment, 'changes-requested');
	await expect(page.getByTestId('proposal-state')).toHaveText('changes requested');
}

/** Approves; the approval must be the one that freezes the version, whose ref and digest it returns. */
export async function approve(
	page: Page,
	opts: { proposalId: string; comment?: string }
): Promise<{ ref: string; digest: string }> {
	await decide(page, opts.proposalId, 'Approve', opts.comment ?? '', 'approved');
	const ref = page.getByTestId('frozen-ref');
	if ((await ref.count()) === 0) {
		const count = await page.getByTestId('approval-count').innerText();
		throw new Error(`The approval was recorded but froze no version yet (${count.replace(/\s+/g, ' ').trim()}).`);
	}
	return { ref: (await ref.innerText()).trim(), digest: (await page.getByTestId('frozen-digest').innerText()).trim() };
}

const AUTHOR_STEPS = {
	submit: { button: 'Submit for review', done: 'submitted', state: 'in review' },
	withdraw: { button: 'Withdraw', done: 'withdrawn', state: 'withdrawn' },
	rebase: { button: 'Rebase on the current version', done: 'rebased', state: 'in review' }
} as const;

/** An author's step; works with scripts on or off, since each button is a plain form post. */
export async function authorStep(
	page: Page,
	opts: { proposalId: string; step: keyof typeof AUTHOR_STEPS }
): Promise<void> {
	const { button, done, state } = AUTHOR_STEPS[opts.step];
	await page.goto(`/review/${opts.proposalId}`);
	await press(page, opts.proposalId, button, done);
	await expect(page.getByTestId('proposal-state')).toHaveText(state);
}
