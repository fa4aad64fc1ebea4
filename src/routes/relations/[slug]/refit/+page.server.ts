import { error, fail, redirect } from '@sveltejs/kit';
import {
	defaultValues,
	fitRequestFromValues,
	valuesFromForm,
	valuesFromRequest,
	type FitAnchor,
	type FitRequestBody
} from '$lib/components/calibrators/fit-form';
import { requireRole } from '$lib/server/auth/guards';
import { fittableRevisions } from '$lib/server/calibrator-pages/catalogue';
import { orFormFailure, orPageError } from '$lib/server/calibrator-pages/page-errors';
import { getConfig } from '$lib/server/config';
import { AnalysisJob } from '$lib/server/entities/analysis-job.entity';
import { getAppFitQueue } from '$lib/server/jobs/app-queue';
import { fitInputOf, requestFit } from '$lib/server/registry/fits';
import { actorOf, uuidParam } from '$lib/server/registry/http';
import {
	createProposal,
	editProposal,
	findVisibleFitJob,
	getProposal,
	submitProposal
} from '$lib/server/registry/proposals';
import { findVisibleRelation } from '$lib/server/registry/relations';
import { FitRequestSchema } from '$lib/server/registry/schemas';
import { jobToWire } from '$lib/server/registry/wire';
import { renderMarkdown } from '$lib/server/text/markdown';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { Actions, PageServerLoad } from './$types';

/**
 * Refit and propose: choose a calibrator revision and fit options, look at the fit, then save it as a
 * draft proposal with a rationale and submit it. `?proposal=<id>` revises a draft or a proposal sent
 * back for changes. With scripts the fit previews live through the API; without, each step posts.
 */
const anchorOf = (anchorType: string): FitAnchor => (anchorType === 'parallax' ? 'parallax' : 'host');
const EDITABLE = new Set(['draft', 'changes_requested']);

async function fitView(em: EntityManager, locals: App.Locals, jobId: string) {
	const job = await findVisibleFitJob(em, actorOf(locals), uuidParam(jobId, 'fit'));
	return { job: jobToWire(job), request: fitInputOf(job).request as unknown as FitRequestBody };
}

export const load: PageServerLoad = async ({ locals, params, url }) => {
	requireRole('curator');
	return orPageError(async () => {
		const actor = actorOf(locals);
		const relation = await findVisibleRelation(locals.em, actor, params.slug);
		const anchor = anchorOf(relation.anchorType);
		const revisions = await fittableRevisions(locals.em, actor);
		let proposal = null;
		let fit = null;
		const proposalId = url.searchParams.get('proposal');
		if (proposalId) {
			const view = await getProposal(locals.em, actor, uuidParam(proposalId, 'proposal'));
			if (view.relation.slug !== relation.slug) error(404, `There is no proposal ${proposalId} for ${relation.slug}.`);
			const p = view.proposal;
			proposal = {
				id: p.id,
				title: p.title,
				rationale: p.rationale,
				rationaleHtml: renderMarkdown(p.rationale),
				embargoUntil: p.embargoUntil?.toISOString().slice(0, 10) ?? '',
				state: p.state,
				editable: EDITABLE.has(p.state) && p.author.id === actor.id,
				canSubmit: view.availableCommands.includes('submit')
			};
			const job = await locals.em.findOneOrFail(AnalysisJob, p.fit.id);
			fit = { job: jobToWire(job), request: fitInputOf(job).request as unknown as FitRequestBody };
		}
		const jobId = url.searchParams.get('job');
		if (jobId) fit = await fitView(locals.em, locals, jobId);
		const first = revisions[0] ? `${revisions[0].set}@${revisions[0].revision}` : '';
		const preferred = url.searchParams.get('set');
		const chosen = revisions.find((r) => `${r.set}@${r.revision}` === preferred) ? preferred! : first;
		return {
			relation: {
				slug: relation.slug,
				title: relation.title,
				band: relation.band,
				population: relation.population,
				anchorType: relation.anchorType,
				visibility: relation.visibility,
				magnitudeSystem: relation.magnitudeSystem
			},
			anchor,
			revisions,
			values: fit ? valuesFromRequest(fit.request) : defaultValues(chosen, relation.band, relation.population, anchor),
			fit,
			proposal,
			notice: url.searchParams.get('created')
				? 'The relation was created. Fit it from a calibrator revision.'
				: url.searchParams.get('saved')
					? 'The draft proposal was saved.'
					: url.searchParams.get('submitted')
						? 'The proposal was submitted for review.'
						: null
		};
	});
};

function proposalFields(form: FormData) {
	return {
		proposal: String(form.get('proposal') ?? ''),
		fit: String(form.get('fit') ?? ''),
		title: String(form.get('title') ?? '').slice(0, 200),
		rationale: String(form.get('rationale') ?? '').slice(0, 50_000),
		embargoUntil: String(form.get('embargoUntil') ?? '')
	};
}

/** A date (YYYY-MM-DD) is read as 00:00 UTC that day. */
function embargoDate(raw: string): Date | null | 'bad' {
	if (raw === '') return null;
	if (!/^\d{4}-\d{2}-\d{2}$/.test(raw)) return 'bad';
	const date = new Date(`${raw}T00:00:00Z`);
	return Number.isNaN(date.getTime()) ? 'bad' : date;
}

export const actions: Actions = {
	fit: async ({ request, locals, params }) => {
		requireRole('curator');
		const form = await request.formData();
		const values = valuesFromForm(form);
		const proposal = proposalFields(form);
		const relation = await orPageError(() => findVisibleRelation(locals.em, actorOf(locals), params.slug));
		const built = fitRequestFromValues(values, anchorOf(relation.anchorType));
		if (!built.ok) return fail(400, { kind: 'fit' as const, values, proposal, fieldErrors: built.errors });
		const parsed = FitRequestSchema.safeParse(built.request);
		if (!parsed.success) {
			return fail(400, {
				kind: 'fit' as const,
				values,
				proposal,
				fieldErrors: {},
				refusal: { status: 400, message: parsed.error.issues.map((i) => i.message).join('; '), errors: [] }
			});
		}
		return orFormFailure(
			async () => {
				const config = getConfig();
				const { job } = await requestFit(locals.em, actorOf(locals), parsed.data, await getAppFitQueue(), {
					bootstrapResamples: config.CANDLEBOOK_BACKGROUND_BOOTSTRAP,
					stars: config.CANDLEBOOK_BACKGROUND_STARS
				});
				return { kind: 'fit' as const, values, proposal, fit: { job: jobToWire(job), request: built.request } };
			},
			{ kind: 'fit' as const, values, proposal }
		);
	},

	preview: async ({ request, locals }) => {
		requireRole('curator');
		const form = await request.formData();
		const proposal = proposalFields(form);
		const fit = proposal.fit ? await orPageError(() => fitView(locals.em, locals, proposal.fit)) : null;
		return { kind: 'preview' as const, proposal, previewHtml: renderMarkdown(proposal.rationale), fit };
	},

	save: async ({ request, locals, params }) => {
		requireRole('curator');
		const form = await request.formData();
		const proposal = proposalFields(form);
		const fit = proposal.fit ? await orPageError(() => fitView(locals.em, locals, proposal.fit)) : null;
		const echo = { kind: 'save' as const, proposal, fit };
		const embargo = embargoDate(proposal.embargoUntil);
		const fieldErrors: Record<string, string> = {};
		if (!proposal.fit) fieldErrors.fit = 'Run a fit first: the proposal is the fit you see.';
		if (proposal.title.trim() === '') fieldErrors.title = 'Give the proposal a title.';
		if (embargo === 'bad') fieldErrors.embargoUntil = 'Give a date as YYYY-MM-DD.';
		if (Object.keys(fieldErrors).length > 0 || embargo === 'bad') return fail(400, { ...echo, fieldErrors });
		const actor = actorOf(locals);
		const outcome = await orFormFailure(async () => {
			if (proposal.proposal) {
				const id = uuidParam(proposal.proposal, 'proposal');
				await editProposal(locals.em, actor, id, {
					fit: proposal.fit,
					title: proposal.title.trim(),
					rationale: proposal.rationale,
					embargoUntil: embargo
				});
				return id;
			}
			const created = await createProposal(locals.em, actor, params.slug, {
				fit: proposal.fit,
				title: proposal.title.trim(),
				rationale: proposal.rationale,
				embargoUntil: embargo,
				submit: false
			});
			return created.id;
		}, echo);
		if (typeof outcome !== 'string') return outcome;
		redirect(303, `/relations/${params.slug}/refit?proposal=${outcome}&saved=1`);
	},

	submit: async ({ request, locals, params }) => {
		requireRole('curator');
		const form = await request.formData();
		const id = String(form.get('proposal') ?? '');
		const outcome = await orFormFailure(
			async () => {
				await submitProposal(locals.em, actorOf(locals), uuidParam(id, 'proposal'));
				return id;
			},
			{ kind: 'submit' as const }
		);
		if (typeof outcome !== 'string') return outcome;
		redirect(303, `/relations/${params.slug}/refit?proposal=${id}&submitted=1`);
	}
};
