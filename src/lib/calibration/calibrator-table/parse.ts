import Papa from 'papaparse';
import { fieldDefinition, isPopulation, REQUIRED_FIELDS, type FieldDefinition } from './fields';
import { findForbiddenCells, showForbiddenCharacters } from '../forbidden-characters';

/**
 * Reads an uploaded calibrator table (CSV or TSV) into canonical rows. Nothing is half-accepted: the
 * result either has rows and no issues, or lists every problem by line, column and value.
 */
export interface ColumnMappingEntry {
	/** The Candlebook field this column fills, or null to ignore the column. */
	field: string | null;
	/** Unit id of the column's values (see fields.ts); defaults to the field's canonical unit. */
	unit?: string | null;
}

export type ColumnMapping = Record<string, ColumnMappingEntry>;

export interface TableLimits {
	maxRows: number;
	maxColumns: number;
	maxCellLength: number;
}

export const DEFAULT_TABLE_LIMITS: TableLimits = { maxRows: 20_000, maxColumns: 200, maxCellLength: 500 };

export interface TableOptions {
	/**
	 * A zero or negative parallax cannot be inverted into a distance, so by default it is refused. A
	 * parallax-space fit uses such parallaxes as measured (dropping them biases the sample), so a curator
	 * who fits that way may keep them.
	 */
	keepNonPositiveParallax?: boolean;
	/**
	 * Required fields a later step fills (periods from light-curve analyses): their column may be absent
	 * and their cells empty here; that step then checks every row has a value.
	 */
	filledLater?: readonly string[];
}

export interface TableIssue {
	/** 1-based line in the file (the header is line 1); null for problems with the file as a whole. */
	line: number | null;
	column: string | null;
	value: string | null;
	reason: string;
}

export interface MappedColumn {
	field: string;
	source_column: string;
	unit: string | null;
}

export type CellValue = number | string | null;

export interface CanonicalRow {
	star: string;
	values: Record<string, CellValue>;
}

export interface ParsedTable {
	delimiter: string;
	columns: MappedColumn[];
	rows: CanonicalRow[];
	issues: TableIssue[];
}

/** Most issues worth listing; past this the report says how many more there were. */
const MAX_REPORTED_ISSUES = 200;

export function parseCalibratorTable(
	text: string,
	mapping: ColumnMapping = {},
	limits: TableLimits = DEFAULT_TABLE_LIMITS,
	options: TableOptions = {}
): ParsedTable {
	const issues: TableIssue[] = [];
	const report = (issue: TableIssue) => {
		if (issues.length < MAX_REPORTED_ISSUES) issues.push(issue);
	};
	const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), {
		skipEmptyLines: 'greedy',
		delimitersToGuess: [',', '\t', ';']
	});
	const empty: ParsedTable = { delimiter: parsed.meta.delimiter, columns: [], rows: [], issues };
	for (const error of parsed.errors.slice(0, 20)) {
		report({ line: error.row === undefined ? null : error.row + 1, column: null, value: null, reason: error.message });
	}
	const [header, ...body] = parsed.data;
	if (!header || header.length === 0) {
		report({ line: null, column: null, value: null, reason: 'the file has no header row' });
		return empty;
	}
	for (const issue of forbiddenCellIssues(parsed.data, (rowIndex) => rowIndex + 1)) report(issue);
	if (issues.length > 0) return empty;
	if (header.length > limits.maxColumns) {
		report({ line: 1, column: null, value: null, reason: `more than ${limits.maxColumns} columns` });
		return empty;
	}
	if (body.length > limits.maxRows) {
		report({
			line: null,
			column: null,
			value: null,
			reason: `${body.length} rows; at most ${limits.maxRows} are accepted per revision`
		});
		return empty;
	}

	const filledLater = new Set(options.filledLater ?? []);
	const columns = resolveColumns(header, mapping, report, filledLater);
	if (issues.length > 0) return empty;

	const rows: CanonicalRow[] = [];
	const seenStars = new Map<string, number>();
	body.forEach((cells, index) => {
		const line = index + 2;
		if (cells.length !== header.length) {
			report({ line, column: null, value: null, reason: `has ${cells.length} cells; the header has ${header.length}` });
			return;
		}
		const values: Record<string, CellValue> = {};
		for (const column of columns) {
			const raw = cells[column.index].trim();
			const required = column.definition.required === true && !filledLater.has(column.definition.field);
			const cell = readCell(raw, column.definition, column.unitId, required);
			if (raw.length > limits.maxCellLength) {
				report({
					line,
					column: column.source,
					value: raw.slice(0, 40) + '…',
					reason: `longer than ${limits.maxCellLength} characters`
				});
			} else if (typeof cell === 'object' && cell !== null) {
				report({ line, column: column.source, value: raw, reason: cell.reason });
			} else if (
				column.definition.field === 'parallax_mas' &&
				typeof cell === 'number' &&
				cell <= 0 &&
				!options.keepNonPositiveParallax
			) {
				report({
					line,
					column: column.source,
					value: raw,
					reason: 'must be positive to give a distance; keep zero and negative parallaxes only for parallax-space fits'
				});
			} else {
				values[column.definition.field] = cell;
			}
		}
		const star = values.star;
		if (typeof star !== 'string') return;
		const earlier = seenStars.get(star);
		if (earlier !== undefined) {
			report({
				line,
				column: columns.find((c) => c.definition.field === 'star')!.source,
				value: star,
				reason: `the same star is on line ${earlier}`
			});
			return;
		}
		seenStars.set(star, line);
		rows.push({ star, values });
	});
	if (rows.length === 0 && issues.length === 0)
		report({ line: null, column: null, value: null, reason: 'the file has no data rows' });
	if (issues.length > 0) return empty;
	return {
		delimiter: parsed.meta.delimiter,
		columns: columns.map((column) => ({
			field: column.definition.field,
			source_column: column.source,
			unit: column.unitId
		})),
		rows,
		issues
	};
}

interface ResolvedColumn {
	index: number;
	source: string;
	definition: FieldDefinition;
	unitId: string | null;
}

function resolveColumns(
	header: string[],
	mapping: ColumnMapping,
	report: (issue: TableIssue) => void,
	filledLater: ReadonlySet<string>
): ResolvedColumn[] {
	const resolved: ResolvedColumn[] = [];
	const byField = new Map<string, string>();
	header.forEach((rawName, index) => {
		const source = rawName.trim();
		const entry: ColumnMappingEntry | undefined = mapping[source];
		if (entry && entry.field === null) return;
		const field = entry?.field ?? source;
		const definition = fieldDefinition(field);
		if (!definition) {
			const reason = entry
				? `is mapped to "${field}", which is not a Candlebook field`
				: 'is not a Candlebook column name; map it to a field (with its unit) or ignore it';
			report({ line: 1, column: source, value: null, reason });
			return;
		}
		const unitId = entry?.unit ?? definition.canonicalUnit;
		if (definition.units.length > 0 && !definition.units.some((unit) => unit.id === unitId)) {
			const allowed = definition.units.map((unit) => unit.id).join(', ');
			report({ line: 1, column: source, value: unitId, reason: `unit must be one of ${allowed} for ${field}` });
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
		resolved.push({ index, source, definition, unitId: definition.units.length > 0 ? unitId : null });
	});
	for (const field of REQUIRED_FIELDS) {
		if (!byField.has(field) && !filledLater.has(field))
			report({ line: 1, column: null, value: null, reason: `no column fills the required field "${field}"` });
	}
	return resolved;
}

const MISSING = new Set(['', 'na', 'nan', 'null', '-99.99']);

function readCell(
	raw: string,
	definition: FieldDefinition,
	unitId: string | null,
	required: boolean
): CellValue | { reason: string } {
	if (definition.kind === 'text') {
		if (raw === '') return required ? { reason: 'is empty' } : null;
		return raw;
	}
	if (definition.kind === 'population') {
		if (isPopulation(raw)) return raw;
		return {
			reason:
				'is not a population id (classical_fundamental, classical_first_overtone, type2_bl_her, type2_w_vir, type2_rv_tau)'
		};
	}
	if (MISSING.has(raw.toLowerCase())) return required ? { reason: 'is missing' } : null;
	if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(raw)) return { reason: 'is not a number' };
	const unit = definition.units.find((candidate) => candidate.id === unitId)!;
	const value = unit.toCanonical(Number(raw));
	if (!Number.isFinite(value)) return { reason: 'is out of range' };
	const problem = definition.check?.(value);
	return problem ? { reason: problem } : value;
}

/** A cell holding a character text cannot carry (NUL, a lone surrogate, …), by line and column. */
export function forbiddenCellIssues(rows: string[][], lineOf: (rowIndex: number) => number): TableIssue[] {
	const header = rows[0] ?? [];
	return findForbiddenCells(rows, lineOf).map(({ line, columnIndex, cell, reason }) => {
		const name = header[columnIndex]?.trim();
		const shown = showForbiddenCharacters(cell);
		return {
			line,
			column: name ? showForbiddenCharacters(name) : `column ${columnIndex + 1}`,
			value: shown.length > 60 ? `${shown.slice(0, 60)}…` : shown,
			reason
		};
	});
}
