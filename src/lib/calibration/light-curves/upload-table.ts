/**
 * Reads an uploaded light-curve table (CSV or TSV) into series, one per star and band. Columns: time,
 * magnitude, error, and optionally band and star (a file without a star column is one star, named by
 * the uploader). Nothing is half-accepted: the result either has series and no issues, or lists every
 * problem by line, column and value, as the calibrator-table parser does.
 */
import Papa from 'papaparse';
import { isSingleBandId, SINGLE_BAND_IDS } from '../bands';
import { forbiddenCellIssues, looksLikeFormula, type TableIssue } from '../calibrator-table/index';
import { MIN_POINTS, type LightCurvePoint, type LightCurveSeries } from './series';
import { isTimeReference, TIME_REFERENCES, type TimeReference } from './time';

export const LIGHT_CURVE_FIELDS = ['time', 'magnitude', 'error', 'band', 'star'] as const;
export type LightCurveField = (typeof LIGHT_CURVE_FIELDS)[number];

const REQUIRED: readonly LightCurveField[] = ['time', 'magnitude', 'error'];

/** Header names read without a mapping (compared case-insensitively). */
const HEADER_NAMES: Record<string, LightCurveField> = {
	time: 'time',
	magnitude: 'magnitude',
	mag: 'magnitude',
	error: 'error',
	err: 'error',
	mag_err: 'error',
	band: 'band',
	star: 'star'
};

/** Source column name → field (or null to ignore the column). */
export type LightCurveColumnMapping = Record<string, LightCurveField | null>;

export const LIGHT_CURVE_MEDIA_TYPES = ['text/csv', 'text/tab-separated-values'] as const;
export type LightCurveMediaType = (typeof LIGHT_CURVE_MEDIA_TYPES)[number];

export interface LightCurveUploadOptions {
	mediaType: LightCurveMediaType;
	/** As the uploader states it; checked here so a bad value is reported like any other problem. */
	timeReference: string | null;
	timeOffsetDays: string | number | null;
	mapping?: LightCurveColumnMapping;
	/** Star id for a file without a star column. */
	star?: string | null;
	/** Band for a file without a band column. */
	band?: string | null;
}

export interface LightCurveUploadLimits {
	maxBytes: number;
	/** Data rows (points) per file. */
	maxRows: number;
	maxCellLength: number;
	maxSeries: number;
}

export const DEFAULT_LIGHT_CURVE_UPLOAD_LIMITS: LightCurveUploadLimits = {
	maxBytes: 8 * 1024 * 1024,
	maxRows: 200_000,
	maxCellLength: 100,
	maxSeries: 500
};

export interface ParsedLightCurveUpload {
	delimiter: string;
	timeReference: TimeReference | null;
	timeOffsetDays: number | null;
	columns: { field: LightCurveField; source_column: string }[];
	series: LightCurveSeries[];
	issues: TableIssue[];
}

const MAX_REPORTED_ISSUES = 200;
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const NOT_A_NUMBER = new Set(['nan', '-nan', '+nan', 'inf', '-inf', '+inf', 'infinity', '-infinity']);
/** Star ids become a page path segment, so no slash; spaces, dots, plus and dashes as catalogues use them. */
export const STAR_ID_PATTERN = /^[\p{L}\p{N}][\p{L}\p{N} ._+-]{0,99}$/u;
export const STAR_ID_RULE = 'a star id is 1–100 letters, digits, spaces and . _ + -, starting with a letter or digit';

/** Strict UTF-8 decoding; the issue names the line of the first byte that is not UTF-8. */
function decode(bytes: Uint8Array): { text: string } | { issue: TableIssue } {
	try {
		return { text: new TextDecoder('utf-8', { fatal: true }).decode(bytes) };
	} catch {
		const lenient = new TextDecoder('utf-8').decode(bytes);
		const at = lenient.indexOf('\uFFFD');
		const line = lenient.slice(0, Math.max(at, 0)).split('\n').length;
		return {
			issue: {
				line,
				column: null,
				value: null,
				reason: 'the file is not UTF-8 text (e.g. Latin-1); save it as UTF-8 and upload it again'
			}
		};
	}
}

function readNumber(raw: string): number | { reason: string } {
	if (raw === '') return { reason: 'is empty' };
	if (NOT_A_NUMBER.has(raw.toLowerCase()))
		return { reason: 'is not a finite number (NaN or infinity is not a measurement)' };
	if (!NUMBER.test(raw)) return { reason: 'is not a number' };
	const value = Number(raw);
	return Number.isFinite(value) ? value : { reason: 'is out of range' };
}

export function parseLightCurveUpload(
	bytes: Uint8Array,
	options: LightCurveUploadOptions,
	limits: LightCurveUploadLimits = DEFAULT_LIGHT_CURVE_UPLOAD_LIMITS
): ParsedLightCurveUpload {
	const issues: TableIssue[] = [];
	const report = (issue: TableIssue) => {
		if (issues.length < MAX_REPORTED_ISSUES) issues.push(issue);
	};
	const result = (delimiter = ''): ParsedLightCurveUpload => ({
		delimiter,
		timeReference: null,
		timeOffsetDays: null,
		columns: [],
		series: [],
		issues
	});

	const timeReference = options.timeReference;
	if (!isTimeReference(timeReference)) {
		report({
			line: null,
			column: 'time_reference',
			value: timeReference,
			reason: `must be one of ${TIME_REFERENCES.join(', ')}`
		});
	}
	const offset =
		typeof options.timeOffsetDays === 'number'
			? options.timeOffsetDays
			: readNumber(options.timeOffsetDays?.trim() ?? '0');
	if (typeof offset !== 'number') {
		report({ line: null, column: 'time_offset_days', value: String(options.timeOffsetDays), reason: offset.reason });
	}
	const defaultBand = options.band?.trim() || null;
	if (defaultBand !== null && !isSingleBandId(defaultBand)) {
		report({ line: null, column: 'band', value: defaultBand, reason: `must be one of ${SINGLE_BAND_IDS.join(', ')}` });
	}
	if (bytes.byteLength > limits.maxBytes) {
		report({ line: null, column: null, value: null, reason: `the file is larger than ${limits.maxBytes} bytes` });
		return result();
	}
	const decoded = decode(bytes);
	if ('issue' in decoded) {
		report(decoded.issue);
		return result();
	}
	if (issues.length > 0) return result();

	const parsed = Papa.parse<string[]>(decoded.text.replace(/^\uFEFF/, ''), {
		delimitersToGuess: [',', '\t', ';', '|']
	});
	const delimiter = parsed.meta.delimiter;
	for (const error of parsed.errors.slice(0, 20)) {
		// A single-column file has no delimiter to find; the header check below explains it better.
		if (error.code === 'UndetectableDelimiter') continue;
		report({ line: error.row === undefined ? null : error.row + 1, column: null, value: null, reason: error.message });
	}
	const [header, ...body] = parsed.data;
	if (!header || header.every((cell) => cell.trim() === '')) {
		report({ line: null, column: null, value: null, reason: 'the file has no header row' });
		return result(delimiter);
	}
	for (const issue of forbiddenCellIssues(parsed.data, (rowIndex) => rowIndex + 1)) report(issue);
	if (issues.length > 0) return result(delimiter);
	const expected = options.mediaType === 'text/csv' ? ',' : '\t';
	if (header.length > 1 && delimiter !== expected) {
		const named = delimiter === '\t' ? 'tabs' : `"${delimiter}"`;
		report({
			line: 1,
			column: null,
			value: null,
			reason: `the file is sent as ${options.mediaType} but its columns are separated by ${named}`
		});
		return result(delimiter);
	}

	const columns = resolveColumns(header, options.mapping ?? {}, report);
	if (issues.length > 0) return result(delimiter);
	const column = (field: LightCurveField) => columns.find((entry) => entry.field === field);
	const starColumn = column('star');
	const bandColumn = column('band');
	const fixedStar = options.star?.trim() || null;
	if (!starColumn) {
		if (fixedStar === null) {
			report({
				line: 1,
				column: null,
				value: null,
				reason: 'the file has no star column; name the star (query parameter star) or add a star column'
			});
		} else if (!STAR_ID_PATTERN.test(fixedStar)) {
			report({
				line: null,
				column: 'star',
				value: fixedStar,
				reason: STAR_ID_RULE
			});
		}
	}
	const dataRows = body.filter((cells) => !(cells.length === 1 && cells[0].trim() === ''));
	if (dataRows.length > limits.maxRows) {
		report({
			line: null,
			column: null,
			value: null,
			reason: `${dataRows.length} rows; at most ${limits.maxRows} are accepted per file`
		});
	}
	if (issues.length > 0) return result(delimiter);

	const groups = new Map<string, { star: string; band: string | null; firstLine: number; points: LightCurvePoint[] }>();
	body.forEach((cells, index) => {
		const line = index + 2;
		if (cells.length === 1 && cells[0].trim() === '') return;
		if (cells.length !== header.length) {
			report({ line, column: null, value: null, reason: `has ${cells.length} cells; the header has ${header.length}` });
			return;
		}
		const cell = (entry: ResolvedColumn) => cells[entry.index].trim();
		let ok = true;
		const bad = (entry: ResolvedColumn, raw: string, reason: string) => {
			ok = false;
			report({ line, column: entry.source, value: raw.length > 40 ? `${raw.slice(0, 40)}…` : raw, reason });
		};
		const numbers: Partial<Record<'time' | 'magnitude' | 'error', number>> = {};
		for (const field of ['time', 'magnitude', 'error'] as const) {
			const entry = column(field)!;
			const raw = cell(entry);
			if (raw.length > limits.maxCellLength) {
				bad(entry, raw, `longer than ${limits.maxCellLength} characters`);
				continue;
			}
			const value = readNumber(raw);
			if (typeof value !== 'number') {
				bad(entry, raw, value.reason);
				continue;
			}
			if (field === 'error' && value <= 0) {
				bad(entry, raw, 'must be positive (the error sets the point’s weight)');
				continue;
			}
			numbers[field] = value;
		}
		let star = fixedStar ?? '';
		if (starColumn) {
			star = cell(starColumn);
			if (looksLikeFormula(star))
				bad(starColumn, star, 'starts like a spreadsheet formula (=, +, -, @); Candlebook does not store formulas');
			else if (!STAR_ID_PATTERN.test(star)) bad(starColumn, star, STAR_ID_RULE);
		}
		let band = defaultBand;
		if (bandColumn) {
			const raw = cell(bandColumn);
			if (looksLikeFormula(raw))
				bad(bandColumn, raw, 'starts like a spreadsheet formula (=, +, -, @); Candlebook does not store formulas');
			else if (raw === '' && defaultBand === null) bad(bandColumn, raw, 'is empty; give the band or a default band');
			else if (raw !== '' && !isSingleBandId(raw))
				bad(bandColumn, raw, `is not a band id (${SINGLE_BAND_IDS.join(', ')})`);
			else if (raw !== '') band = raw;
		}
		if (!ok) return;
		const key = `${star}\u0000${band ?? ''}`;
		let group = groups.get(key);
		if (!group) {
			group = { star, band, firstLine: line, points: [] };
			groups.set(key, group);
		}
		group.points.push([numbers.time!, numbers.magnitude!, numbers.error!]);
	});
	if (groups.size === 0 && issues.length === 0) {
		report({ line: null, column: null, value: null, reason: 'the file has no data rows' });
	}
	if (groups.size > limits.maxSeries) {
		report({
			line: null,
			column: null,
			value: null,
			reason: `${groups.size} star-and-band series; at most ${limits.maxSeries} are accepted per file`
		});
	}
	for (const group of groups.values()) {
		const times = new Set(group.points.map((point) => point[0]));
		if (group.points.length < MIN_POINTS) {
			report({
				line: group.firstLine,
				column: starColumn?.source ?? null,
				value: group.star,
				reason: `${group.star}${group.band ? ` (${group.band})` : ''} has ${group.points.length} points; a period needs at least ${MIN_POINTS}`
			});
		} else if (times.size === 1) {
			report({
				line: group.firstLine,
				column: column('time')!.source,
				value: group.star,
				reason: `every point of ${group.star} has the same time; a period needs a baseline`
			});
		}
	}
	if (issues.length > 0) return result(delimiter);
	const reference = timeReference as TimeReference;
	const timeOffsetDays = offset as number;
	return {
		delimiter,
		timeReference: reference,
		timeOffsetDays,
		columns: columns.map((entry) => ({ field: entry.field, source_column: entry.source })),
		series: [...groups.values()].map((group) => ({
			id: group.star,
			band: group.band,
			timeReference: reference,
			timeOffsetDays,
			points: group.points
		})),
		issues
	};
}

interface ResolvedColumn {
	index: number;
	source: string;
	field: LightCurveField;
}

function resolveColumns(
	header: string[],
	mapping: LightCurveColumnMapping,
	report: (issue: TableIssue) => void
): ResolvedColumn[] {
	const resolved: ResolvedColumn[] = [];
	const byField = new Map<LightCurveField, string>();
	header.forEach((rawName, index) => {
		const source = rawName.trim();
		const mapped = Object.prototype.hasOwnProperty.call(mapping, source) ? mapping[source] : undefined;
		if (mapped === null) return;
		const field = mapped ?? HEADER_NAMES[source.toLowerCase()];
		if (!field) {
			report({
				line: 1,
				column: source,
				value: null,
				reason: `is not a light-curve column (${LIGHT_CURVE_FIELDS.join(', ')}); map it to one or ignore it`
			});
			return;
		}
		const other = byField.get(field);
		if (other !== undefined) {
			report({
				line: 1,
				column: source,
				value: null,
				reason: `fills "${field}", which column "${other}" already fills`
			});
			return;
		}
		byField.set(field, source);
		resolved.push({ index, source, field });
	});
	for (const field of REQUIRED) {
		if (!byField.has(field)) {
			const hint = header.length === 1 ? ' (the header has one column: is the delimiter right?)' : '';
			report({ line: 1, column: null, value: null, reason: `no column fills the required field "${field}"${hint}` });
		}
	}
	return resolved;
}
