import type { EntityManager } from '@mikro-orm/postgresql';
import { LockMode } from '@mikro-orm/core';
import {
	CalibrationInputError,
	calibratorRowsToCsv,
	DEFAULT_TABLE_LIMITS,
	diffCalibratorRevisions,
	parseCalibratorTable,
	sealCalibratorRevision,
	takeLightCurveValues,
	type CalibratorRevisionContent,
	type CanonicalRow,
	type ColumnMapping,
	type LightCurveNotice,
	type MappedColumn,
	type ParsedTable,
	type RevisionDiff,
	type TableIssue,
	type TableLimits,
	type ValueSource
} from '../../calibration/index';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { Group } from '../entities/index';
import type { RelationVisibility } from '../entities/relation.entity';
import { contentAddress, type ObjectStorage } from '../storage/object-storage';
import { belongsTo, isAdmin, standingInGroup, type Actor } from './actor';
import { auditRegistry } from './audit';
import { conflict, forbidden, invalid, notFound, RegistryError } from './errors';
import { finishedAnalyses, recordValueSources, type LightCurveValuesRequest } from './light-curve-values';
import { decodeUtf8, formulaCellIssues, issuesToFieldErrors } from './upload-checks';

export const UPLOAD_MEDIA_TYPES = ['text/csv', 'text/tab-separated-values'] as const;
export type UploadMediaType = (typeof UPLOAD_MEDIA_TYPES)[number];
export const SOURCE_PREFIX = 'calibrator-sources';

export interface CreateCalibratorSetInput {
	slug: string;
	title: string;
	description: string;
	group: string;
	licence: string;
	citations: string[];
	visibility?: RelationVisibility;
}

export async function createCalibratorSet(em: EntityManager, actor: Actor, input: CreateCalibratorSetInput) {
	const group = await em.findOne(Group, { slug: input.group });
	if (!group) throw invalid(`There is no group called ${input.group}.`, [{ path: 'group', message: 'unknown group' }]);
	if (!(await belongsTo(em, actor, group.id)))
		throw forbidden(`Only members of ${group.slug} may create calibrator sets for it.`);
	return em.transactional(async (tx) => {
		if (await tx.count(CalibratorSet, { slug: input.slug }))
			throw conflict('slug-taken', `A calibrator set called ${input.slug} exists already.`);
		const set = tx.create(CalibratorSet, {
			slug: input.slug,
			title: input.title,
			description: input.description,
			group,
			licence: input.licence,
			citations: input.citations,
			visibility: input.visibility ?? 'public',
			createdBy: actor.id
		});
		await tx.flush();
		await auditRegistry(tx, 'calibrator-set-created', actor, set.slug, {
			group: group.slug,
			licence: set.licence,
			visibility: set.visibility
		});
		return set;
	});
}

/**
 * Changes who may see a set; a set's visibility can only widen. A group-private set may be made public
 * by a manager of its group (or an admin); a public set never becomes private again, because versions
 * built on it show its rows to every reader and must stay reproducible by them. The database refuses
 * the narrowing too (trigger app_calibrator_set_visibility_only_widens).
 */
export async function setCalibratorSetVisibility(
	em: EntityManager,
	actor: Actor,
	slug: string,
	visibility: RelationVisibility
) {
	const set = await findCalibratorSet(em, slug);
	const manager = isAdmin(actor) || (await standingInGroup(em, actor, set.group.id)) === 'manager';
	if (!manager) {
		if (set.visibility !== 'public' && !(await belongsTo(em, actor, set.group.id)))
			throw notFound(`calibrator set called ${slug}`);
		throw forbidden(`Only managers of ${set.group.slug} change who may see ${set.slug}.`);
	}
	if (set.visibility === visibility) return set;
	if (set.visibility === 'public') {
		throw new RegistryError(
			409,
			'visibility-only-widens',
			`${set.slug} is public, and a set's visibility can only widen: relations built on it show its rows to every reader. Upload the data to a new group-private set instead.`,
			[{ path: 'visibility', message: 'a public set cannot become group-private' }]
		);
	}
	set.visibility = visibility;
	await em.flush();
	await auditRegistry(em, 'calibrator-set-published', actor, set.slug, { visibility });
	return set;
}

export async function findCalibratorSet(em: EntityManager, slug: string) {
	const set = await em.findOne(CalibratorSet, { slug }, { populate: ['group'] });
	if (!set) throw notFound(`calibrator set called ${slug}`);
	return set;
}

export interface UploadInput {
	bytes: Uint8Array;
	mediaType: string;
	fileName: string;
	mapping: ColumnMapping;
	note: string;
	/** Keep zero and negative parallaxes (for parallax-space fits) instead of refusing them. */
	keepNonPositiveParallax?: boolean;
	/** Take periods and mean magnitudes from one of the uploader's light-curve uploads. */
	lightCurves?: LightCurveValuesRequest;
}

export interface UploadLimits extends TableLimits {
	maxBytes: number;
}

export const DEFAULT_UPLOAD_LIMITS: UploadLimits = { ...DEFAULT_TABLE_LIMITS, maxBytes: 32 * 1024 * 1024 };

function refuseTable(issues: TableIssue[], total = issues.length): never {
	throw new RegistryError(
		422,
		'invalid-table',
		`The table was not stored: ${total} problem${total === 1 ? '' : 's'} (nothing was saved).`,
		issuesToFieldErrors(issues),
		{ issues }
	);
}

/**
 * Every check an upload must pass, without writing anything: the upload wizard runs it to show the
 * validation report, and `uploadRevision` runs it again before it stores. Throws 415, 413 or 422.
 */
export function checkUploadTable(
	input: Pick<UploadInput, 'bytes' | 'mediaType' | 'mapping' | 'keepNonPositiveParallax' | 'lightCurves'>,
	limits: UploadLimits = DEFAULT_UPLOAD_LIMITS
): { mediaType: UploadMediaType; table: ParsedTable } {
	const mediaType = input.mediaType.split(';')[0].trim().toLowerCase();
	if (!(UPLOAD_MEDIA_TYPES as readonly string[]).includes(mediaType)) {
		throw new RegistryError(415, 'unsupported-media-type', 'Send the table as text/csv or text/tab-separated-values.');
	}
	if (input.bytes.byteLength > limits.maxBytes) {
		throw new RegistryError(413, 'too-large', `The file is larger than ${limits.maxBytes} bytes.`);
	}
	const decoded = decodeUtf8(input.bytes);
	if (!decoded.ok) refuseTable([decoded.issue]);
	const table = parseCalibratorTable(decoded.text, input.mapping, limits, {
		keepNonPositiveParallax: input.keepNonPositiveParallax ?? false,
		filledLater: input.lightCurves ? ['period_days'] : []
	});
	if (table.issues.length > 0) refuseTable(table.issues);
	const expected = mediaType === 'text/csv' ? ',' : '\t';
	if (table.delimiter !== expected) {
		const named = table.delimiter === '\t' ? 'tabs' : `"${table.delimiter}"`;
		refuseTable([
			{
				line: 1,
				column: null,
				value: null,
				reason: `the file is sent as ${mediaType} but its columns are separated by ${named}`
			}
		]);
	}
	const formulas = formulaCellIssues(table.columns, table.rows);
	if (formulas.length > 0) refuseTable(formulas);

	return { mediaType: mediaType as UploadMediaType, table };
}

export interface PreparedRevisionTable {
	mediaType: UploadMediaType;
	columns: MappedColumn[];
	rows: CanonicalRow[];
	/** Values taken from light-curve analyses (empty when none were asked for). */
	valueSources: ValueSource[];
	lightCurveNotices: LightCurveNotice[];
}

/**
 * `checkUploadTable`, then the values asked for from a light-curve upload: the table a revision would
 * hold, still without writing anything. A row left without a period is refused by line and column.
 */
export async function prepareRevisionTable(
	em: EntityManager,
	actor: Actor,
	input: Pick<UploadInput, 'bytes' | 'mediaType' | 'mapping' | 'keepNonPositiveParallax' | 'lightCurves'>,
	limits: UploadLimits = DEFAULT_UPLOAD_LIMITS
): Promise<PreparedRevisionTable> {
	const { mediaType, table } = checkUploadTable(input, limits);
	if (!input.lightCurves) {
		return { mediaType, columns: table.columns, rows: table.rows, valueSources: [], lightCurveNotices: [] };
	}
	const analyses = await finishedAnalyses(em, actor, input.lightCurves.upload);
	const taken = takeLightCurveValues(table, analyses, input.lightCurves.fill);
	if (taken.issues.length > 0) refuseTable(taken.issues);
	return {
		mediaType,
		columns: taken.columns,
		rows: taken.rows,
		valueSources: taken.sources,
		lightCurveNotices: taken.notices
	};
}

/**
 * Validates an upload completely, then stores the revision row and the original file together:
 * either both exist afterwards or neither does.
 */
export async function uploadRevision(
	em: EntityManager,
	storage: ObjectStorage,
	actor: Actor,
	slug: string,
	input: UploadInput,
	limits: UploadLimits = DEFAULT_UPLOAD_LIMITS
) {
	return (await storeRevision(em, storage, actor, slug, input, limits)).revision;
}

/** `uploadRevision`, also answering what became of the light-curve analyses asked for. */
export async function storeRevision(
	em: EntityManager,
	storage: ObjectStorage,
	actor: Actor,
	slug: string,
	input: UploadInput,
	limits: UploadLimits = DEFAULT_UPLOAD_LIMITS
) {
	const set = await findCalibratorSet(em, slug);
	if (!(await belongsTo(em, actor, set.group.id))) {
		// A private set's name is not confirmed to those who may not see it.
		if (set.visibility !== 'public') throw notFound(`calibrator set called ${slug}`);
		throw forbidden(`Only members of ${set.group.slug} may upload revisions of ${set.slug}.`);
	}
	const table = await prepareRevisionTable(em, actor, input, limits);
	const { mediaType } = table;

	const address = contentAddress(SOURCE_PREFIX, input.bytes);
	const { key: sourceKey, sha256: sourceSha } = address;
	const existedBefore = await storage.exists(sourceKey);
	let stored = false;
	try {
		const revision = await em.transactional(async (tx) => {
			// One upload at a time per set: numbers are dense and never reused.
			await tx.findOneOrFail(CalibratorSet, set.id, { lockMode: LockMode.PESSIMISTIC_WRITE });
			const last = await tx.findOne(
				CalibratorRevision,
				{ calibratorSet: set.id },
				{ orderBy: { number: 'desc' }, fields: ['number'] }
			);
			const number = (last?.number ?? 0) + 1;
			const content = sealContent(set.slug, number, input, mediaType, sourceSha, table);
			const revision = tx.create(CalibratorRevision, {
				calibratorSet: set.id,
				number,
				digest: content.digest,
				sourceSha256: sourceSha,
				sourceKey,
				sourceName: input.fileName,
				sourceMediaType: mediaType,
				sourceBytes: input.bytes.byteLength,
				rowCount: table.rows.length,
				content,
				note: input.note,
				uploadedBy: actor.id
			});
			recordValueSources(tx, revision, table.valueSources);
			await tx.flush();
			await auditRegistry(tx, 'calibrator-revision-uploaded', actor, `${set.slug}#${number}`, {
				digest: content.digest,
				sourceSha256: sourceSha,
				rows: table.rows.length,
				...(input.lightCurves
					? { lightCurveUpload: input.lightCurves.upload, valuesFromLightCurves: table.valueSources.length }
					: {})
			});
			// Last step before commit: a failed put rolls the row back.
			await storage.putAt(address, input.bytes, mediaType);
			stored = true;
			return revision;
		});
		return { revision, valueSources: table.valueSources, lightCurveNotices: table.lightCurveNotices };
	} catch (error) {
		if (stored && !existedBefore) await storage.delete(sourceKey).catch(() => undefined);
		throw error;
	}
}

function sealContent(
	slug: string,
	number: number,
	input: UploadInput,
	mediaType: string,
	sourceSha: string,
	table: Pick<PreparedRevisionTable, 'columns' | 'rows' | 'valueSources'>
): CalibratorRevisionContent & { digest: string } {
	try {
		return sealCalibratorRevision({
			calibrator_set: slug,
			revision: number,
			source_file: { name: input.fileName, media_type: mediaType, digest: `sha256:${sourceSha}` },
			columns: table.columns,
			rows: table.rows,
			// Only a revision that took values from light curves carries the key.
			...(table.valueSources.length > 0 ? { value_sources: table.valueSources } : {})
		});
	} catch (error) {
		if (error instanceof CalibrationInputError) {
			throw invalid(
				'The table does not make a valid revision.',
				error.issues.map((issue) => ({ path: issue.field, message: issue.message }))
			);
		}
		throw error;
	}
}

export async function findRevision(em: EntityManager, slug: string, number: number) {
	const set = await findCalibratorSet(em, slug);
	const revision = await em.findOne(CalibratorRevision, { calibratorSet: set.id, number });
	if (!revision) throw notFound(`revision ${number} of ${slug}`);
	return { set, revision };
}

export function revisionContent(revision: { content: Record<string, unknown> }) {
	return revision.content as unknown as CalibratorRevisionContent & { digest: string };
}

/** The stored rows; uploads only ever hold numbers, text and nulls. */
export function revisionRows(revision: { content: Record<string, unknown> }): CanonicalRow[] {
	return revisionContent(revision).rows as CanonicalRow[];
}

export async function listRevisions(em: EntityManager, slug: string) {
	const set = await findCalibratorSet(em, slug);
	const revisions = await em.find(
		CalibratorRevision,
		{ calibratorSet: set.id },
		{ orderBy: { number: 'asc' }, exclude: ['content'] }
	);
	return { set, revisions };
}

/** Row-by-row, field-by-field diff of two revisions of a set, keyed by cross_id when present. */
export async function diffRevisions(em: EntityManager, slug: string, from: number, to: number): Promise<RevisionDiff> {
	const [a, b] = await Promise.all([findRevision(em, slug, from), findRevision(em, slug, to)]);
	return diffCalibratorRevisions(revisionRows(a.revision), revisionRows(b.revision));
}

/** The revision as CSV with canonical column names; formula-like text cells are neutralised. */
export function revisionCsv(revision: { content: Record<string, unknown> }): string {
	const content = revisionContent(revision);
	return calibratorRowsToCsv(content.columns, revisionRows(revision));
}
