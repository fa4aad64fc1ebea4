import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import {
	calibratorRowsToCsv,
	diffCalibratorRevisions,
	neutraliseFormula,
	parseCalibratorTable,
	toCalibratorRows
} from './index';

const CANONICAL = [
	'star,cross_id,population,period_days,mag_V,mag_err_V,parallax_mas,parallax_err_mas,ebv,reference',
	'Alpha Lyncis Minor,1001,classical_fundamental,5.366,3.95,0.01,3.27,0.05,0.12,Invented 2026',
	'Beta Fornax Nova,1002,classical_first_overtone,3.1,5.20,0.02,-0.10,0.20,,Invented 2026'
].join('\n');

describe('calibrator table upload', () => {
	test('canonical columns are read directly, in canonical units, with missing values as null', () => {
		const table = parseCalibratorTable(CANONICAL, {}, undefined, { keepNonPositiveParallax: true });
		expect(table.issues).toEqual([]);
		expect(table.columns.map((column) => column.field)).toEqual(CANONICAL.split('\n')[0].split(','));
		expect(table.rows[0]).toEqual({
			star: 'Alpha Lyncis Minor',
			values: {
				star: 'Alpha Lyncis Minor',
				cross_id: '1001',
				population: 'classical_fundamental',
				period_days: 5.366,
				mag_V: 3.95,
				mag_err_V: 0.01,
				parallax_mas: 3.27,
				parallax_err_mas: 0.05,
				ebv: 0.12,
				reference: 'Invented 2026'
			}
		});
		expect(table.rows[1].values.ebv).toBeNull();
		// A negative parallax is a measurement, kept (when asked) for parallax-space fits.
		expect(table.rows[1].values.parallax_mas).toBe(-0.1);
	});

	test('a zero or negative parallax is refused unless the curator keeps it for a parallax-space fit', () => {
		const table = parseCalibratorTable(CANONICAL);
		expect(table.rows).toEqual([]);
		expect(table.issues).toEqual([
			{ line: 3, column: 'parallax_mas', value: '-0.10', reason: expect.stringContaining('must be positive') }
		]);
	});

	test('TSV is detected, and other headers are mapped with units converted to canonical ones', () => {
		const tsv = [
			'Name\tMode\tlogP\tVmag\tplx_uas\tnotes',
			'Gamma Invent\tclassical_fundamental\t1.0\t6.1\t850\tx'
		].join('\n');
		const table = parseCalibratorTable(tsv, {
			Name: { field: 'star' },
			Mode: { field: 'population' },
			logP: { field: 'period_days', unit: 'log10_d' },
			Vmag: { field: 'mag_V' },
			plx_uas: { field: 'parallax_mas', unit: 'uas' },
			notes: { field: null }
		});
		expect(table.issues).toEqual([]);
		expect(table.delimiter).toBe('\t');
		expect(table.rows[0].values.period_days).toBeCloseTo(10, 12);
		expect(table.rows[0].values.parallax_mas).toBeCloseTo(0.85, 12);
		expect(table.columns).toContainEqual({ field: 'parallax_mas', source_column: 'plx_uas', unit: 'uas' });
		expect(Object.keys(table.rows[0].values)).not.toContain('notes');
	});

	test('every bad cell is reported with its line, column, value and reason, and no rows are accepted', () => {
		const bad = [
			'star,population,period_days,mag_V,mag_err_V',
			'A,classical_fundamental,-3,5.0,0.01',
			'B,cepheid,4.0,abc,0.01',
			'C,classical_fundamental,4.0,5.0,-0.2',
			'A,classical_fundamental,4.0,5.0,0.01'
		].join('\n');
		const table = parseCalibratorTable(bad);
		expect(table.rows).toEqual([]);
		expect(table.issues).toEqual([
			{ line: 2, column: 'period_days', value: '-3', reason: 'must be positive' },
			{ line: 3, column: 'population', value: 'cepheid', reason: expect.stringContaining('not a population id') },
			{ line: 3, column: 'mag_V', value: 'abc', reason: 'is not a number' },
			{ line: 4, column: 'mag_err_V', value: '-0.2', reason: 'must not be negative' },
			{ line: 5, column: 'star', value: 'A', reason: 'the same star is on line 2' }
		]);
	});

	test('unknown headers, unknown bands, bad units and missing required fields are refused at the header', () => {
		const table = parseCalibratorTable('star,period_days,mag_Q,colour\nA,3,1,2', {
			period_days: { field: 'period_days', unit: 'years' }
		});
		const reasons = table.issues.map((issue) => `${issue.column}: ${issue.reason}`);
		expect(reasons).toEqual([
			'period_days: unit must be one of d, h, log10_d for period_days',
			'mag_Q: is not a Candlebook column name; map it to a field (with its unit) or ignore it',
			'colour: is not a Candlebook column name; map it to a field (with its unit) or ignore it',
			'null: no column fills the required field "population"',
			'null: no column fills the required field "period_days"'
		]);
	});

	test('size limits are enforced with a clear message', () => {
		const rows = Array.from({ length: 11 }, (_, i) => `S${i},classical_fundamental,3`).join('\n');
		const table = parseCalibratorTable(
			`star,population,period_days\n${rows}`,
			{},
			{ maxRows: 10, maxColumns: 10, maxCellLength: 50 }
		);
		expect(table.issues).toEqual([
			{ line: null, column: null, value: null, reason: '11 rows; at most 10 are accepted per revision' }
		]);
	});

	test('RFC 4180 quoting: commas, quotes and line breaks inside quoted fields survive', () => {
		// RFC 4180 §2 rules 5–7: fields may be quoted; a quote inside is doubled.
		const csv =
			'star,population,period_days,reference\n"Delta, Invented",classical_fundamental,4,"Smith ""et al."" 2026\nline two"';
		const table = parseCalibratorTable(csv);
		expect(table.issues).toEqual([]);
		expect(table.rows[0].star).toBe('Delta, Invented');
		expect(table.rows[0].values.reference).toBe('Smith "et al." 2026\nline two');
	});
});

describe('calibrator table export', () => {
	test.each([
		['=HYPERLINK("x")', '\'=HYPERLINK("x")'],
		['+1', "'+1"],
		['-2+3', "'-2+3"],
		['@SUM(A1)', "'@SUM(A1)"],
		['\tcmd', "'\tcmd"],
		['Alpha Lyncis', 'Alpha Lyncis']
	])('OWASP CSV-injection guidance: %j is written as %j', (cell, written) => {
		expect(neutraliseFormula(cell)).toBe(written);
	});

	test('export then re-import gives the same rows; numeric cells are never prefixed', () => {
		const keep = { keepNonPositiveParallax: true };
		const table = parseCalibratorTable(CANONICAL, {}, undefined, keep);
		const csv = calibratorRowsToCsv(table.columns, table.rows);
		expect(csv).toContain(',-0.1,');
		const again = parseCalibratorTable(csv, {}, undefined, keep);
		expect(again.rows).toEqual(table.rows);
	});
});

describe('revision diff', () => {
	const keep = { keepNonPositiveParallax: true };
	const before = parseCalibratorTable(CANONICAL, {}, undefined, keep).rows;

	test('a renamed star matched by cross_id is a rename with its field changes, not a removal and an addition', () => {
		const after = parseCalibratorTable(
			CANONICAL.replace(
				'Alpha Lyncis Minor,1001,classical_fundamental,5.366,3.95',
				'alf Lyn Min,1001,classical_fundamental,5.366,3.97'
			).replace(/\nBeta.*$/, '\nEpsilon New,1003,classical_fundamental,7.0,6.0,0.02,1.0,0.05,0.2,Invented 2026')
		).rows;
		const diff = diffCalibratorRevisions(before, after);
		expect(diff.changed).toEqual([
			{
				star: 'alf Lyn Min',
				previousName: 'Alpha Lyncis Minor',
				matchedBy: 'cross_id',
				changes: [{ field: 'mag_V', from: 3.95, to: 3.97 }]
			}
		]);
		expect(diff.added.map((row) => row.star)).toEqual(['Epsilon New']);
		expect(diff.removed.map((row) => row.star)).toEqual(['Beta Fornax Nova']);
		expect(diff.unchangedCount).toBe(0);
	});

	test('identical revisions have no changes', () => {
		const diff = diffCalibratorRevisions(before, before);
		expect(diff).toMatchObject({ added: [], removed: [], changed: [], unchangedCount: 2 });
	});
});

const GALACTIC = 'galactic-calibrators';
describe.skipIf(!hasReferenceData(GALACTIC))(
	hasReferenceData(GALACTIC) ? 'a published calibrator table' : missingReason(GALACTIC),
	() => {
		test('Fouqué et al. 2007 Table 7 (59 Galactic Cepheids) maps, converts log P and feeds the engine', () => {
			// galactic-calibrators/table7.csv has no population column; all 59 are classical fundamental-mode
			// Cepheids (Fouqué et al. 2007, A&A 476, 73), so the column is added in memory for this check.
			const lines = readReferenceFile('galactic-calibrators', 'table7.csv').trim().split(/\r?\n/);
			const text = lines.map((line, i) => `${line},${i === 0 ? 'Pop' : 'classical_fundamental'}`).join('\n');
			const mapping = {
				Star: { field: 'star' },
				Pop: { field: 'population' },
				logP: { field: 'period_days', unit: 'log10_d' },
				BMAG: { field: 'mag_B' },
				VMAG: { field: 'mag_V' },
				RcMAG: { field: 'mag_Rc' },
				IcMAG: { field: 'mag_Ic' },
				Wvi: { field: 'mag_W_VI' },
				Wbi: { field: 'mag_W_BI' },
				JMAG: { field: 'mag_J' },
				HMAG: { field: 'mag_H' },
				KsMAG: { field: 'mag_Ks' }
			};
			const table = parseCalibratorTable(text, mapping);
			expect(table.issues).toEqual([]);
			expect(table.rows).toHaveLength(59);
			const rtAur = table.rows.find((row) => row.star === 'RT Aur')!;
			expect(Math.log10(rtAur.values.period_days as number)).toBeCloseTo(0.571489, 12);
			expect(rtAur.values.mag_Rc).toBeNull();
			const [first] = toCalibratorRows(table.rows);
			expect(first.mags.V).toEqual({ value: -2.84, error: 0 });
			expect(first.mags.Rc).toBeUndefined();
		});
	}
);
