import { error, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { requireUser } from '$lib/server/auth/guards';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, uuidParam } from '$lib/server/registry/http';
import {
	commentOnProposal,
	rebaseProposal,
	reviewProposal,
	submitProposal,
	withdrawProposal
} from '$lib/server/registry/proposals';
import { invalidForm, optionalComment, pageCommand, requiredComment } from '$lib/server/review/page-commands';
import { logPeriodsOf, proposalPage } from '$lib/server/review/proposal-page';
import type { ReviewDecision } from '$lib/server/entities/proposal-comment.entity';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

function proposalId(raw: string): string {
	try {
		return uuidParam(raw, 'proposal');
	} catch (cause) {
		if (cause instanceof RegistryError) error(404, cause.message);
		throw cause;
	}
}

export const load: PageServerLoad = async ({ locals, params, url }) => {
	requireUser();
	const id = proposalId(params.id);
	const periods = logPeriodsOf(url.searchParams.get('periods'));
	const page = await pageCommandLoad(() => proposalPage(locals.em, actorOf(locals), id, periods.logPeriods));
	return { ...page, periods: { value: url.searchParams.get('periods') ?? '', problem: periods.problem } };
};

async function pageCommandLoad<T>(work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (cause) {
		if (cause instanceof RegistryError) error(cause.status === 404 ? 404 : cause.status, cause.message);
		throw cause;
	}
}

async function decideWith(event: RequestEvent, decision: ReviewDecision, action: string, done: string) {
	requireUser();
	const id = proposalId(event.params.id);
	const data = await event.request.formData();
	const values = { comment: String(data.get('comment') ?? '') };
	const parsed = (decision === 'approve' ? optionalComment : requiredComment).safeParse(values.comment);
	if (!parsed.success) return invalidForm(action, values, withPath(parsed.error));
	const failure = await pageCommand(action, values, async () => {
		await reviewProposal(event.locals.em, actorOf(event.locals), id, decision, parsed.data);
	});
	if (failure) return failure;
	redirect(303, `/review/${id}?done=${done}`);
}

/** Issues from a bare string schema carry no path; name the field they belong to. */
function withPath(zodError: z.ZodError): z.ZodError {
	return new z.ZodError(zodError.issues.map((issue) => ({ ...issue, path: ['comment'] })));
}

async function authorCommand(event: RequestEvent, action: string, done: string, run: (id: string) => Promise<unknown>) {
	requireUser();
	const id = proposalId(event.params.id);
	const failure = await pageCommand(action, {}, async () => {
		await run(id);
	});
	if (failure) return failure;
	redirect(303, `/review/${id}?done=${done}`);
}

export const actions: Actions = {
	comment: async (event) => {
		requireUser();
		const id = proposalId(event.params.id);
		const data = await event.request.formData();
		const values = { body: String(data.get('body') ?? '') };
		const parsed = z.object({ body: optionalComment.min(1, 'Write something to post.') }).safeParse(values);
		if (!parsed.success) return invalidForm('comment', values, parsed.error);
		const failure = await pageCommand('comment', values, async () => {
			await commentOnProposal(event.locals.em, actorOf(event.locals), id, parsed.data.body);
		});
		if (failure) return failure;
		redirect(303, `/review/${id}?done=commented#comments`);
	},
	approve: async (event) => decideWith(event, 'approve', 'approve', 'approved'),
	requestChanges: async (event) => decideWith(event, 'request_changes', 'requestChanges', 'changes-requested'),
	reject: async (event) => decideWith(event, 'reject', 'reject', 'rejected'),
	submit: async (event) =>
		authorCommand(event, 'submit', 'submitted', (id) => submitProposal(event.locals.em, actorOf(event.locals), id)),
	withdraw: async (event) =>
		authorCommand(event, 'withdraw', 'withdrawn', (id) => withdrawProposal(event.locals.em, actorOf(event.locals), id)),
	rebase: async (event) =>
		authorCommand(event, 'rebase', 'rebased', (id) => rebaseProposal(event.locals.em, actorOf(event.locals), id))
};
