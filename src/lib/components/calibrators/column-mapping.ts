import { BANDS, fieldDefinition, STATIC_FIELD_NAMES, type ColumnMapping } from '$lib/calibration/index';

/**
 * The wizard's column-mapping step, as plain data: which Candlebook field each header may fill, which
 * units a field accepts, and the mapping the form fields describe (`field:<header>`, `unit:<header>`).
 */
export const IGNORE = '__ignore';

export const FIELD_CHOICES: string[] = [
	...STATIC_FIELD_NAMES,
	...Object.keys(BANDS).flatMap((band) => [`mag_${band}`, `mag_err_${band}`])
];

export function unitChoices(field: string | null): { id: string; label: string }[] {
	const definition = field ? fieldDefinition(field) : null;
	return definition?.units.map((unit) => ({ id: unit.id, label: unit.label })) ?? [];
}

export const ALL_UNITS: { id: string; label: string }[] = [
	...new Map(FIELD_CHOICES.flatMap(unitChoices).map((unit) => [unit.id, unit] as const)).values()
];

/** A header that already is a Candlebook field name needs no mapping. */
export function suggestedField(header: string): string {
	return fieldDefinition(header.trim()) ? header.trim() : '';
}

export interface MappingRow {
	header: string;
	field: string;
	unit: string;
}

/** Form rows → the parser's mapping; identity rows are left out, as the API expects. */
export function mappingFromRows(rows: readonly MappingRow[]): ColumnMapping {
	const mapping: ColumnMapping = {};
	for (const row of rows) {
		if (row.field === IGNORE) {
			mapping[row.header] = { field: null };
			continue;
		}
		if (!row.field) continue;
		if (row.field === row.header && !row.unit) continue;
		mapping[row.header] = row.unit ? { field: row.field, unit: row.unit } : { field: row.field };
	}
	return mapping;
}

export function rowsFromForm(headers: readonly string[], form: FormData): MappingRow[] {
	return headers.map((header) => ({
		header,
		field: String(form.get(`field:${header}`) ?? ''),
		unit: String(form.get(`unit:${header}`) ?? '')
	}));
}
