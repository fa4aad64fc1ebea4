import Papa from 'papaparse';
import type { CanonicalRow, MappedColumn } from './parse';

/**
 * A text cell a spreadsheet would run as a formula (OWASP "CSV injection"): it starts with = + - @, a
 * tab or a carriage return. Numbers are written as numbers, so a negative value is never touched.
 */
const FORMULA_START = /^[=+\-@\t\r]/;

export function looksLikeFormula(cell: string): boolean {
	return FORMULA_START.test(cell);
}

export function neutraliseFormula(cell: string): string {
	return looksLikeFormula(cell) ? `'${cell}` : cell;
}

/** Writes canonical rows as CSV with canonical column names, in the revision's column order. */
export function calibratorRowsToCsv(columns: readonly MappedColumn[], rows: readonly CanonicalRow[]): string {
	const fields = columns.map((column) => column.field);
	const data = rows.map((row) =>
		fields.map((field) => {
			const value = row.values[field];
			if (value === null || value === undefined) return '';
			return typeof value === 'string' ? neutraliseFormula(value) : String(value);
		})
	);
	return Papa.unparse({ fields, data }, { newline: '\n', quotes: false }) + '\n';
}
