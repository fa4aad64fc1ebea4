import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { parseLightCurveUpload, type LightCurveUploadOptions } from './upload-table';

const utf8 = (text: string) => new TextEncoder().encode(text);
const csv: LightCurveUploadOptions = { mediaType: 'text/csv', timeReference: 'HJD', timeOffsetDays: '2450000' };

/** An invented two-star, two-band file: 12 points per star and band, sinusoids with a fixed error. */
function inventedFile(delimiter = ','): string {
	const lines = [['star', 'band', 'time', 'magnitude', 'error'].join(delimiter)];
	for (const star of ['KCS-001', 'KCS-002']) {
		for (const band of ['V', 'Ic']) {
			for (let i = 0; i < 12; i++) {
				const time = 1000 + i * 1.37;
				lines.push([star, band, time.toFixed(4), (15 + 0.3 * Math.sin(time)).toFixed(3), '0.010'].join(delimiter));
			}
		}
	}
	return lines.join('\n') + '\n';
}

/** Replaces one cell (1-based file line, 0-based cell) of a CSV text. */
function withCell(text: string, line: number, cell: number, value: string): string {
	const lines = text.split('\n');
	const cells = lines[line - 1].split(',');
	cells[cell] = value;
	lines[line - 1] = cells.join(',');
	return lines.join('\n');
}

describe('light-curve upload table', () => {
	test('a star column and a band column give one series per star and band, with the stated time frame', () => {
		const parsed = parseLightCurveUpload(utf8(inventedFile()), csv);
		expect(parsed.issues).toEqual([]);
		expect(parsed.series.map((series) => `${series.id}/${series.band}/${series.points.length}`)).toEqual([
			'KCS-001/V/12',
			'KCS-001/Ic/12',
			'KCS-002/V/12',
			'KCS-002/Ic/12'
		]);
		expect(parsed.series[0]).toMatchObject({ timeReference: 'HJD', timeOffsetDays: 2450000 });
		expect(parsed.series[0].points[1]).toEqual([1001.37, Number((15 + 0.3 * Math.sin(1001.37)).toFixed(3)), 0.01]);
	});

	test('the same table as TSV with non-canonical headers, mapped', () => {
		const text = inventedFile('\t').replace('star\tband\ttime\tmagnitude\terror', 'name\tfilter\tHJD\tI\tsigma');
		const parsed = parseLightCurveUpload(utf8(text), {
			...csv,
			mediaType: 'text/tab-separated-values',
			mapping: { name: 'star', filter: 'band', HJD: 'time', I: 'magnitude', sigma: 'error' }
		});
		expect(parsed.issues).toEqual([]);
		expect(parsed.series).toHaveLength(4);
	});

	test('one file per star: no star column, the star and band named by the uploader', () => {
		const text =
			'time,mag,err\n' + Array.from({ length: 10 }, (_, i) => `${i * 0.7},${15 + (i % 3) * 0.1},0.02`).join('\n');
		const parsed = parseLightCurveUpload(utf8(text), { ...csv, star: 'KCS-009', band: 'V' });
		expect(parsed.issues).toEqual([]);
		expect(parsed.series).toEqual([expect.objectContaining({ id: 'KCS-009', band: 'V' })]);
		const unnamed = parseLightCurveUpload(utf8(text), csv);
		expect(unnamed.issues).toEqual([
			expect.objectContaining({ line: 1, reason: expect.stringContaining('no star column') })
		]);
	});

	test.each([
		{
			case: 'text in a number',
			text: withCell(inventedFile(), 5, 3, 'bright'),
			issue: { line: 5, column: 'magnitude', value: 'bright', reason: 'is not a number' }
		},
		{
			case: 'NaN',
			text: withCell(inventedFile(), 7, 2, 'NaN'),
			issue: { line: 7, column: 'time', value: 'NaN', reason: expect.stringContaining('NaN') }
		},
		{
			case: 'negative error',
			text: withCell(inventedFile(), 18, 4, '-0.01'),
			issue: { line: 18, column: 'error', value: '-0.01', reason: expect.stringContaining('must be positive') }
		},
		{
			case: 'zero error',
			text: withCell(inventedFile(), 3, 4, '0'),
			issue: { line: 3, column: 'error', value: '0', reason: expect.stringContaining('must be positive') }
		},
		{
			case: 'formula cell',
			text: withCell(inventedFile(), 9, 0, '=HYPERLINK("x")'),
			issue: { line: 9, column: 'star', value: '=HYPERLINK("x")', reason: expect.stringContaining('formula') }
		},
		{
			case: 'unknown band',
			text: withCell(inventedFile(), 4, 1, 'Q'),
			issue: { line: 4, column: 'band', value: 'Q', reason: expect.stringContaining('not a band id') }
		},
		{
			case: 'short row',
			text: inventedFile().replace(/\nKCS-001,V,1001\.3700,[^\n]*/, '\nKCS-001,V,1001.37'),
			issue: { line: 3, column: null, value: null, reason: 'has 3 cells; the header has 5' }
		}
	])('refuses $case, naming line, column and value', ({ text, issue }) => {
		const parsed = parseLightCurveUpload(utf8(text), csv);
		expect(parsed.series).toEqual([]);
		expect(parsed.issues).toContainEqual(issue);
	});

	test('a star id with a slash is refused: it names a page', () => {
		const text = withCell(inventedFile(), 2, 0, 'KCS/001');
		expect(parseLightCurveUpload(utf8(text), csv).issues).toContainEqual({
			line: 2,
			column: 'star',
			value: 'KCS/001',
			reason: expect.stringContaining('a star id is')
		});
	});

	test('a missing column is named', () => {
		const text = inventedFile().replace('star,band,time,magnitude,error', 'star,band,time,magnitude,sigma');
		const parsed = parseLightCurveUpload(utf8(text), csv);
		expect(parsed.issues).toEqual([
			{ line: 1, column: 'sigma', value: null, reason: expect.stringContaining('not a light-curve column') },
			{ line: 1, column: null, value: null, reason: 'no column fills the required field "error"' }
		]);
	});

	test('a CSV upload separated by semicolons or tabs is refused as the wrong delimiter', () => {
		for (const [delimiter, named] of [
			[';', '";"'],
			['\t', 'tabs']
		]) {
			const parsed = parseLightCurveUpload(utf8(inventedFile(delimiter)), csv);
			expect(parsed.issues).toEqual([
				{
					line: 1,
					column: null,
					value: null,
					reason: `the file is sent as text/csv but its columns are separated by ${named}`
				}
			]);
		}
	});

	test('an unknown time reference and a bad offset are named before the file is read', () => {
		const parsed = parseLightCurveUpload(utf8(inventedFile()), {
			...csv,
			timeReference: 'TJD',
			timeOffsetDays: 'half'
		});
		expect(parsed.issues).toEqual([
			{ line: null, column: 'time_reference', value: 'TJD', reason: 'must be one of HJD, BJD_TDB, JD, MJD' },
			{ line: null, column: 'time_offset_days', value: 'half', reason: 'is not a number' }
		]);
	});

	test('Latin-1 bytes are refused with the line they are on', () => {
		const text = withCell(inventedFile(), 6, 0, 'KCS-00\u00e9');
		const bytes = Uint8Array.from(text, (char) => char.charCodeAt(0)); // ISO-8859-1: é is one byte 0xE9
		const parsed = parseLightCurveUpload(bytes, csv);
		expect(parsed.issues).toEqual([
			{ line: 6, column: null, value: null, reason: expect.stringContaining('not UTF-8') }
		]);
	});

	test('too many rows and too many bytes are refused as a whole', () => {
		const limits = { maxBytes: 1_000_000, maxRows: 40, maxCellLength: 100, maxSeries: 500 };
		expect(parseLightCurveUpload(utf8(inventedFile()), csv, limits).issues).toEqual([
			{ line: null, column: null, value: null, reason: '48 rows; at most 40 are accepted per file' }
		]);
		expect(parseLightCurveUpload(utf8(inventedFile()), csv, { ...limits, maxBytes: 100 }).issues).toEqual([
			{ line: null, column: null, value: null, reason: 'the file is larger than 100 bytes' }
		]);
	});

	test('a series with fewer than ten points is named by its first line', () => {
		const text = inventedFile() + 'KCS-003,V,1000,15.1,0.01\n';
		const parsed = parseLightCurveUpload(utf8(text), csv);
		expect(parsed.issues).toEqual([
			{ line: 50, column: 'star', value: 'KCS-003', reason: 'KCS-003 (V) has 1 points; a period needs at least 10' }
		]);
	});

	test('blank lines keep the line numbers of the file', () => {
		const text = withCell(inventedFile().replace('\nKCS-001,V,1001', '\n\nKCS-001,V,1001'), 5, 3, 'x');
		expect(parseLightCurveUpload(utf8(text), csv).issues).toEqual([
			{ line: 5, column: 'magnitude', value: 'x', reason: 'is not a number' }
		]);
	});
});

// Light curve: OGLE-III I band (Soszyński et al. 2008, AcA 58, 163), read in place, columns HJD − 2450000,
// I, error; turned into a TSV upload with a header, as a survey user would.
describe.skipIf(!hasReferenceData('light-curves'))(
	`OGLE light curve as an upload — ${missingReason('light-curves')}`,
	() => {
		test('every point of OGLE-LMC-CEP-0002 arrives unchanged', () => {
			const lines = readReferenceFile('light-curves', 'OGLE-LMC-CEP-0002.dat').trim().split('\n');
			const text = ['time\tmagnitude\terror', ...lines.map((line) => line.trim().split(/\s+/).join('\t'))].join('\n');
			const parsed = parseLightCurveUpload(utf8(text), {
				mediaType: 'text/tab-separated-values',
				timeReference: 'HJD',
				timeOffsetDays: 2450000,
				star: 'OGLE-LMC-CEP-0002',
				band: 'Ic'
			});
			expect(parsed.issues).toEqual([]);
			expect(parsed.series[0].points).toEqual(lines.map((line) => line.trim().split(/\s+/).map(Number)));
		});
	}
);
