import type { EntityManager } from '@mikro-orm/postgresql';
import { HubbleRequestSchema, estimateHubble, type HubbleResponse } from '../api/hubble';
import { computeDistances, readDistanceEnvelope, toDistanceResponse, type DistanceResponse } from '../api/distances';
import type { Actor } from '../registry/actor';
import { RegistryError } from '../registry/errors';
import { MAX_HOST_CSV_BYTES, parseHostCsv, type CsvCellError } from '../../worksheet/host-csv';
import type { WorksheetRecord } from '../../worksheet/export';
import {
	distanceRequestFrom,
	fieldsFrom,
	hubbleRequestFrom,
	type FieldErrors,
	type WorksheetFields
} from '../../worksheet/worksheet-fields';

/** What a worksheet submission produced: the echoed fields, and either results or the problems found. */
export interface WorksheetOutcome {
	fields: WorksheetFields;
	csvErrors: CsvCellError[];
	fieldErrors: FieldErrors;
	distances: DistanceResponse | null;
	hubble: HubbleResponse | null;
	record: WorksheetRecord | null;
}

/** The posted fields, with an uploaded file's text taking the place of the pasted CSV. */
export async function readWorksheetForm(
	data: FormData
): Promise<{ fields: WorksheetFields; fileError: string | null }> {
	const text: Record<string, string> = {};
	for (const [key, value] of data) if (typeof value === 'string' && !(key in text)) text[key] = value;
	const fields = fieldsFrom(text);
	const file = data.get('stars_file');
	if (file instanceof File && file.size > 0) {
		if (file.size > MAX_HOST_CSV_BYTES)
			return { fields, fileError: `the file is larger than ${MAX_HOST_CSV_BYTES} bytes` };
		fields.stars_csv = await file.text();
	}
	return { fields, fileError: null };
}

/**
 * Runs the worksheet as the API would: the distances of the host's Cepheids (the same service as
 * POST /api/v1/distances) and, when asked, H0 from the combined distance (the same as POST /api/v1/hubble).
 */
export async function runWorksheet(
	em: EntityManager,
	reader: Actor | null,
	fields: WorksheetFields,
	withHubble: boolean
): Promise<WorksheetOutcome> {
	const outcome: WorksheetOutcome = {
		fields,
		csvErrors: [],
		fieldErrors: {},
		distances: null,
		hubble: null,
		record: null
	};
	const parsed = parseHostCsv(fields.stars_csv);
	if (!parsed.ok) {
		outcome.csvErrors = parsed.errors;
		return outcome;
	}
	const request = distanceRequestFrom(fields, parsed.stars);
	if ('errors' in request) {
		outcome.fieldErrors = request.errors;
		return outcome;
	}
	try {
		outcome.distances = toDistanceResponse(await computeDistances(em, reader, readDistanceEnvelope(request.body)));
	} catch (error) {
		if (!(error instanceof RegistryError)) throw error;
		const where = error.status === 404 ? 'relation_typed' : 'form';
		const detail = error.errors.length > 0 ? ` ${error.errors.map((e) => `${e.path}: ${e.message}`).join('; ')}` : '';
		outcome.fieldErrors = {
			[where]:
				error.status === 404
					? `There is no relation version ${request.body.relation} that you may see.`
					: `${error.message}${detail}`
		};
		return outcome;
	}
	const record: WorksheetRecord = {
		distanceRequest: request.body,
		distances: outcome.distances,
		hubbleRequest: null,
		hubble: null
	};
	outcome.record = record;
	if (!withHubble) return outcome;
	const hubbleRequest = hubbleRequestFrom(fields, outcome.distances.combined);
	if ('errors' in hubbleRequest) {
		outcome.fieldErrors = hubbleRequest.errors;
		return outcome;
	}
	const checked = HubbleRequestSchema.safeParse(hubbleRequest.body);
	if (!checked.success) {
		outcome.fieldErrors = Object.fromEntries(
			checked.error.issues.map((issue) => [String(issue.path[0] ?? 'form'), issue.message])
		);
		return outcome;
	}
	try {
		outcome.hubble = estimateHubble(checked.data);
	} catch (error) {
		const body = (error as { body?: { message?: string } }).body;
		if (!body?.message) throw error;
		outcome.fieldErrors = { form: body.message };
		return outcome;
	}
	record.hubbleRequest = hubbleRequest.body;
	record.hubble = outcome.hubble;
	return outcome;
}
