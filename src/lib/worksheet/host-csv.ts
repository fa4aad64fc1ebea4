import Papa from 'papaparse';
import { POPULATION_IDS, type PopulationId } from '../calibration/types';

/**
 * A host galaxy's Cepheids as CSV (id, period_days, mean_mag, mean_mag_err, ebv, ebv_err, feh, feh_err,
 * and optionally population): parsed into the stars of a distances request, or refused with every bad
 * cell named by line, column, value and reason. Runs in the browser and on the server alike.
 */
export const HOST_COLUMNS = [
	'id',
	'period_days',
	'mean_mag',
	'mean_mag_err',
	'ebv',
	'ebv_err',
	'feh',
	'feh_err'
] as const;
const OPTIONAL_COLUMNS = [
	'ebv',
	'ebv_err',
	'feh',
	'feh_err',
	'population',
	'magnitude_system',
	'wesenheit_ratio'
] as const;
/** Optional columns beyond the numbers: what a star says about its own photometric system. */
const SYSTEM_COLUMNS = ['population', 'magnitude_system', 'wesenheit_ratio'];
/** Result columns of the worksheet's own CSV export: read past, so an export can be loaded again. */
const EXPORT_RESULT_COLUMNS = [
	'abs_mag',
	'abs_mag_err',
	'mu0',
	'mu0_err',
	'distance_mpc',
	'distance_mpc_err',
	'distance_mpc_p16',
	'distance_mpc_p84',
	'rejected',
	'warnings'
];
const KNOWN_COLUMNS = new Set<string>([...HOST_COLUMNS, ...SYSTEM_COLUMNS, ...EXPORT_RESULT_COLUMNS]);
export const MAX_HOST_CSV_BYTES = 16 * 1024 * 1024;
export const MAX_HOST_STARS = 100_000;

export interface HostStar {
	id: string;
	period_days: number;
	mean_mag: number;
	mean_mag_err: number;
	ebv?: number | null;
	ebv_err?: number | null;
	feh?: number | null;
	feh_err?: number | null;
	population?: PopulationId | null;
	magnitude_system?: 'Vega' | 'AB' | null;
	wesenheit_ratio?: number | null;
}

export interface CsvCellError {
	/** 1-based line in the file (the header is line 1 unless comments precede it). */
	line: number;
	column: string;
	value: string;
	message: string;
}

export type HostCsvResult = { ok: true; stars: HostStar[] } | { ok: false; errors: CsvCellError[] };

const MAX_ERRORS = 100;
type Rule = 'any' | 'positive' | 'non_negative';
const RULES: Record<Exclude<(typeof HOST_COLUMNS)[number], 'id'>, Rule> = {
	period_days: 'positive',
	mean_mag: 'any',
	mean_mag_err: 'non_negative',
	ebv: 'any',
	ebv_err: 'non_negative',
	feh: 'any',
	feh_err: 'non_negative'
};

function numberCell(text: string, rule: Rule): { value: number } | { message: string } {
	if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(text)) return { message: 'is not a number' };
	const value = Number(text);
	if (!Number.isFinite(value)) return { message: 'is not a finite number' };
	if (rule === 'positive' && !(value > 0)) return { message: 'must be greater than 0' };
	if (rule === 'non_negative' && value < 0) return { message: 'must not be negative' };
	return { value };
}

const isBlank = (row: string[]) => row.every((cell) => cell.trim() === '');

/** Parses host-galaxy Cepheids; lines starting with `#` are comments (exports write their settings there). */
export function parseHostCsv(text: string): HostCsvResult {
	if (text.length > MAX_HOST_CSV_BYTES) {
		return {
			ok: false,
			errors: [{ line: 1, column: '', value: '', message: `the file is larger than ${MAX_HOST_CSV_BYTES} bytes` }]
		};
	}
	// Without header mode, papaparse keeps one array per physical line, so line numbers stay exact.
	const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false });
	const rows = parsed.data;
	const errors: CsvCellError[] = [];
	const push = (error: CsvCellError) => {
		if (errors.length < MAX_ERRORS) errors.push(error);
	};
	const headerIndex = rows.findIndex((row) => !isBlank(row) && !row[0].trimStart().startsWith('#'));
	if (headerIndex < 0)
		return { ok: false, errors: [{ line: 1, column: '', value: '', message: 'no header line and no stars' }] };
	const header = rows[headerIndex].map((cell) => cell.trim());
	for (const [i, name] of header.entries()) {
		if (!KNOWN_COLUMNS.has(name)) {
			push({
				line: headerIndex + 1,
				column: name || `column ${i + 1}`,
				value: name,
				message: `unknown column; expected ${[...HOST_COLUMNS, ...SYSTEM_COLUMNS].join(', ')}`
			});
		}
	}
	for (const required of HOST_COLUMNS.filter((name) => !(OPTIONAL_COLUMNS as readonly string[]).includes(name))) {
		if (!header.includes(required)) {
			push({ line: headerIndex + 1, column: required, value: '', message: 'required column is missing' });
		}
	}
	if (errors.length > 0) return { ok: false, errors };

	const stars: HostStar[] = [];
	const seen = new Map<string, number>();
	for (let r = headerIndex + 1; r < rows.length; r++) {
		const row = rows[r];
		const line = r + 1;
		if (isBlank(row) || row[0].trimStart().startsWith('#')) continue;
		if (row.length !== header.length) {
			push({
				line,
				column: '',
				value: row.join(','),
				message: `has ${row.length} cells, the header has ${header.length}`
			});
			continue;
		}
		const star: Partial<HostStar> & Record<string, unknown> = {};
		let bad = false;
		header.forEach((name, c) => {
			const value = row[c].trim();
			const fail = (message: string) => {
				bad = true;
				push({ line, column: name, value, message });
			};
			if (name === 'id') {
				if (value === '') fail('a star needs an id');
				else if (value.length > 200) fail('is longer than 200 characters');
				else if (seen.has(value)) fail(`the same id is on line ${seen.get(value)}`);
				else {
					seen.set(value, line);
					star.id = value;
				}
				return;
			}
			if (EXPORT_RESULT_COLUMNS.includes(name)) return;
			if (name === 'population') {
				if (value === '') star.population = null;
				else if ((POPULATION_IDS as readonly string[]).includes(value)) star.population = value as PopulationId;
				else fail(`must be one of ${POPULATION_IDS.join(', ')}`);
				return;
			}
			if (name === 'magnitude_system') {
				if (value === '') star.magnitude_system = null;
				else if (value === 'Vega' || value === 'AB') star.magnitude_system = value;
				else fail('must be Vega or AB');
				return;
			}
			if (name === 'wesenheit_ratio') {
				if (value === '') {
					star.wesenheit_ratio = null;
					return;
				}
				const ratio = numberCell(value, 'positive');
				if ('message' in ratio) fail(ratio.message);
				else star.wesenheit_ratio = ratio.value;
				return;
			}
			const rule = RULES[name as keyof typeof RULES];
			if (value === '') {
				if ((OPTIONAL_COLUMNS as readonly string[]).includes(name)) star[name] = null;
				else fail('is required');
				return;
			}
			const cell = numberCell(value, rule);
			if ('message' in cell) fail(cell.message);
			else star[name] = cell.value;
		});
		if (!bad) stars.push(star as HostStar);
		if (stars.length > MAX_HOST_STARS) {
			return {
				ok: false,
				errors: [{ line, column: '', value: '', message: `more than ${MAX_HOST_STARS} stars in one worksheet` }]
			};
		}
	}
	if (errors.length === 0 && stars.length === 0) {
		push({ line: headerIndex + 2, column: '', value: '', message: 'no stars below the header' });
	}
	return errors.length > 0 ? { ok: false, errors } : { ok: true, stars };
}
