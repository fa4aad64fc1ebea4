import { fail, redirect } from '@sveltejs/kit';
import Papa from 'papaparse';
import {
	diffCalibratorRevisions,
	LIGHT_CURVE_FILLS,
	type CanonicalRow,
	type ColumnMapping,
	type LightCurveFill,
	type TableIssue
} from '$lib/calibration/index';
import {
	mappingFromRows,
	rowsFromForm,
	suggestedField,
	type MappingRow
} from '$lib/components/calibrators/column-mapping';
import type { LightCurveChoice } from '$lib/components/calibrators/upload-wizard';
import { requireRole } from '$lib/server/auth/guards';
import { orPageError } from '$lib/server/calibrator-pages/page-errors';
import {
	discardStagedUpload,
	readStagedUpload,
	stageUpload,
	uploadLimits,
	uploadMediaType
} from '$lib/server/calibrator-pages/staged-uploads';
import { belongsTo } from '$lib/server/registry/actor';
import { listUploads } from '$lib/server/light-curves/uploads';
import { findVisibleCalibratorSet } from '$lib/server/registry/calibrator-set-reads';
import {
	findRevision,
	listRevisions,
	prepareRevisionTable,
	revisionRows,
	uploadRevision,
	type PreparedRevisionTable
} from '$lib/server/registry/calibrator-sets';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, UUID } from '$lib/server/registry/http';
import { ColumnMappingSchema } from '$lib/server/registry/schemas';
import { decodeUtf8 } from '$lib/server/registry/upload-checks';
import { getObjectStorage } from '$lib/server/storage/app-storage';
import type { Actions, PageServerLoad } from './$types';

/**
 * The upload wizard: file → column mapping and units → validation report → preview → commit. Each
 * step is a form post; the file waits in staging storage (see staged-uploads.ts) until commit.
 */
export const load: PageServerLoad = async ({ locals, params, url }) => {
	requireRole('curator');
	return orPageError(async () => {
		await findVisibleCalibratorSet(locals.em, actorOf(locals), params.slug);
		const { set, revisions } = await listRevisions(locals.em, params.slug);
		const limits = uploadLimits();
		const analysed = (await listUploads(locals.em, actorOf(locals))).filter((upload) => upload.state === 'succeeded');
		const asked = url.searchParams.get('light_curves');
		return {
			lightCurveUploads: analysed.map((upload) => ({
				id: upload.id,
				label: `${upload.source_name} · ${upload.star_count} star${upload.star_count === 1 ? '' : 's'} · ${upload.created_at.slice(0, 10)}`
			})),
			chosenLightCurves: asked && analysed.some((upload) => upload.id === asked) ? asked : null,
			set: { slug: set.slug, title: set.title, group: set.group.slug, licence: set.licence },
			latest: revisions.at(-1) ? { number: revisions.at(-1)!.number, rows: revisions.at(-1)!.rowCount } : null,
			member: await belongsTo(locals.em, actorOf(locals), set.group.id),
			limits: { maxBytes: limits.maxBytes, maxRows: limits.maxRows, maxColumns: limits.maxColumns }
		};
	});
};

interface Staged {
	sha256: string;
	name: string;
	mediaType: string;
	bytes: number;
}

function stagedFrom(form: FormData): Staged {
	return {
		sha256: String(form.get('staged') ?? ''),
		name: String(form.get('name') ?? 'upload.csv').slice(0, 200),
		mediaType: String(form.get('mediaType') ?? ''),
		bytes: Number(form.get('bytes') ?? 0)
	};
}

/** The light-curve upload and fill mode the form asks for, or null for none. */
function lightCurveChoiceFrom(form: FormData): LightCurveChoice | null {
	const upload = String(form.get('lightCurves') ?? '');
	if (!UUID.test(upload)) return null;
	const fill = String(form.get('lightCurveFill') ?? 'blank');
	return { upload, fill: (LIGHT_CURVE_FILLS as readonly string[]).includes(fill) ? (fill as LightCurveFill) : 'blank' };
}

function lightCurvePreview(choice: LightCurveChoice | null, table: PreparedRevisionTable) {
	if (!choice) return null;
	return {
		choice,
		cells: table.valueSources.map((source) => `${source.star}\u0000${source.field}`),
		valueCount: table.valueSources.length,
		notices: table.lightCurveNotices
	};
}

/** The header row and a few data rows, for the mapping step. */
function glance(text: string) {
	const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), {
		preview: 4,
		skipEmptyLines: 'greedy',
		delimitersToGuess: [',', '\t', ';']
	});
	const [header = [], ...sample] = parsed.data;
	return { headers: header.map((name) => name.trim()), sample };
}

function columnsFor(headers: string[], previous: MappingRow[] | null): MappingRow[] {
	return headers.map(
		(header) =>
			previous?.find((row) => row.header === header) ?? { header, field: suggestedField(header) || '', unit: '' }
	);
}

async function stagedText(userId: string, staged: Staged) {
	const bytes = await readStagedUpload(userId, staged.sha256);
	const decoded = decodeUtf8(bytes);
	return { bytes, text: decoded.ok ? decoded.text : '' };
}

function summarise(rows: CanonicalRow[]) {
	const populations: Record<string, number> = {};
	let minPeriod = Infinity;
	let maxPeriod = -Infinity;
	for (const row of rows) {
		const population = String(row.values.population);
		populations[population] = (populations[population] ?? 0) + 1;
		const period = row.values.period_days;
		if (typeof period === 'number') {
			minPeriod = Math.min(minPeriod, period);
			maxPeriod = Math.max(maxPeriod, period);
		}
	}
	return {
		populations,
		periodDays: Number.isFinite(minPeriod) ? { min: minPeriod, max: maxPeriod } : null
	};
}

/** The first rows, with the rows that took light-curve values first so the preview shows some of them. */
function previewRows(table: PreparedRevisionTable, count = 25) {
	const sourced = new Set(table.valueSources.map((source) => source.star));
	return [
		...table.rows.filter((row) => sourced.has(row.star)),
		...table.rows.filter((row) => !sourced.has(row.star))
	].slice(0, count);
}

export const actions: Actions = {
	inspect: async ({ request, locals, params }) => {
		const user = requireRole('curator');
		const form = await request.formData();
		const file = form.get('table');
		if (!(file instanceof File) || file.size === 0)
			return fail(400, { step: 'file' as const, message: 'Choose a CSV or TSV file to upload.' });
		const limits = uploadLimits();
		if (file.size > limits.maxBytes)
			return fail(413, { step: 'file' as const, message: `The file is larger than ${limits.maxBytes} bytes.` });
		const mediaType = uploadMediaType(file.name, file.type);
		if (mediaType !== 'text/csv' && mediaType !== 'text/tab-separated-values')
			return fail(415, { step: 'file' as const, message: 'Upload a .csv or .tsv file (UTF-8 text).' });
		const bytes = new Uint8Array(await file.arrayBuffer());
		const decoded = decodeUtf8(bytes);
		if (!decoded.ok)
			return fail(422, { step: 'file' as const, message: 'The file was not read.', issues: [decoded.issue] });
		const { headers, sample } = glance(decoded.text);
		if (headers.length === 0) return fail(422, { step: 'file' as const, message: 'The file has no header row.' });
		if (headers.length > limits.maxColumns)
			return fail(422, { step: 'file' as const, message: `The file has more than ${limits.maxColumns} columns.` });
		return orPageError(async () => {
			await findVisibleCalibratorSet(locals.em, actorOf(locals), params.slug);
			const sha256 = await stageUpload(user.id, bytes, mediaType);
			const staged: Staged = { sha256, name: file.name.slice(0, 200), mediaType, bytes: bytes.byteLength };
			return { step: 'mapping' as const, staged, columns: columnsFor(headers, null), sample };
		});
	},

	validate: async ({ request, locals, params }) => {
		const user = requireRole('curator');
		const form = await request.formData();
		const staged = stagedFrom(form);
		return orPageError(async () => {
			const set = await findVisibleCalibratorSet(locals.em, actorOf(locals), params.slug);
			const { bytes, text } = await stagedText(user.id, staged);
			const { headers, sample } = glance(text);
			const columns = rowsFromForm(headers, form);
			const mapping = mappingFromRows(columns);
			const keep = form.get('keepNonPositiveParallax') === 'on';
			const lightCurves = lightCurveChoiceFrom(form);
			let table;
			try {
				table = await prepareRevisionTable(
					locals.em,
					actorOf(locals),
					{
						bytes,
						mediaType: staged.mediaType,
						mapping,
						keepNonPositiveParallax: keep,
						lightCurves: lightCurves ?? undefined
					},
					uploadLimits()
				);
			} catch (cause) {
				if (!(cause instanceof RegistryError)) throw cause;
				const issues = (cause.extra.issues as TableIssue[] | undefined) ?? [
					{ line: null, column: null, value: null, reason: cause.message }
				];
				return fail(422, {
					step: 'report' as const,
					staged,
					columns,
					sample,
					keep,
					lightCurves,
					message: cause.message,
					issues
				});
			}
			const { revisions } = await listRevisions(locals.em, set.slug);
			const previous = revisions.at(-1) ?? null;
			const before = previous ? revisionRows((await findRevision(locals.em, set.slug, previous.number)).revision) : [];
			const diff = diffCalibratorRevisions(before, table.rows);
			return {
				step: 'preview' as const,
				staged,
				columns,
				keep,
				lightCurves: lightCurvePreview(lightCurves, table),
				mapping: JSON.stringify(mapping),
				fields: table.columns,
				rowCount: table.rows.length,
				rows: previewRows(table),
				summary: summarise(table.rows),
				previous: previous?.number ?? null,
				changes: {
					added: diff.added.map((row) => row.star),
					removed: diff.removed.map((row) => row.star),
					changed: diff.changed.map((change) => ({
						star: change.star,
						fields: change.changes.map((c) => c.field)
					})),
					unchanged: diff.unchangedCount
				}
			};
		});
	},

	commit: async ({ request, locals, params }) => {
		const user = requireRole('curator');
		const form = await request.formData();
		const staged = stagedFrom(form);
		let mapping: ColumnMapping;
		try {
			mapping = ColumnMappingSchema.parse(JSON.parse(String(form.get('mapping') ?? '{}')));
		} catch {
			return fail(400, { step: 'file' as const, message: 'The column mapping was damaged in transit; start again.' });
		}
		const revision = await orPageError(async () => {
			const { bytes } = await stagedText(user.id, staged);
			return uploadRevision(
				locals.em,
				getObjectStorage(),
				actorOf(locals),
				params.slug,
				{
					bytes,
					mediaType: staged.mediaType,
					fileName: staged.name,
					mapping,
					note: String(form.get('note') ?? '').slice(0, 2000),
					keepNonPositiveParallax: form.get('keepNonPositiveParallax') === 'on',
					lightCurves: lightCurveChoiceFrom(form) ?? undefined
				},
				uploadLimits()
			);
		});
		await discardStagedUpload(user.id, staged.sha256);
		redirect(303, `/calibrator-sets/${params.slug}?uploaded=${revision.number}`);
	}
};
