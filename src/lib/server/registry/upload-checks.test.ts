import { describe, expect, test } from 'vitest';
import { parseCalibratorTable, sealCalibratorRevision } from '../../calibration/index';
import { decodeUtf8, formulaCellIssues, issuesToFieldErrors } from './upload-checks';

describe('upload checks', () => {
	test('UTF-8 text decodes; a Latin-1 byte is refused with its line and offset', () => {
		expect(decodeUtf8(new TextEncoder().encode('star\nCéphée'))).toEqual({ ok: true, text: 'star\nCéphée' });
		// 0xE9 is "é" in ISO-8859-1 and an incomplete lead byte in UTF-8 (RFC 3629 §3).
		const latin1 = Uint8Array.from([...new TextEncoder().encode('star\nC'), 0xe9, 0x70, 0x68]);
		const decoded = decodeUtf8(latin1);
		expect(decoded.ok).toBe(false);
		if (!decoded.ok) {
			expect(decoded.issue).toMatchObject({ line: 2, column: null, value: 'byte 0xe9 at offset 6' });
			expect(decoded.issue.reason).toMatch(/not UTF-8/);
		}
	});

	test.each([
		['overlong encoding of "/"', [0xc0, 0xaf]],
		['UTF-16 surrogate', [0xed, 0xa0, 0x80]],
		['beyond U+10FFFF', [0xf4, 0x90, 0x80, 0x80]]
	])('RFC 3629 forbids %s', (_label, bytes) => {
		const decoded = decodeUtf8(Uint8Array.from([0x61, 0x0a, ...bytes]));
		expect(decoded.ok).toBe(false);
		if (!decoded.ok) expect(decoded.issue.value).toBe(`byte 0x${bytes[0].toString(16)} at offset 2`);
	});

	test('text cells that a spreadsheet would evaluate are listed by line and column; numbers never are', () => {
		const table = parseCalibratorTable(
			[
				'star,population,period_days,reference',
				"=cmd|' /C calc'!A0,classical_fundamental,5,ok",
				'Plain,classical_fundamental,5,@SUM(A1)',
				'Negative,classical_fundamental,5,-2+3'
			].join('\n')
		);
		expect(table.issues).toEqual([]);
		const issues = formulaCellIssues(table.columns, table.rows);
		expect(issues.map((issue) => [issue.line, issue.column, issue.value])).toEqual([
			[2, 'star', "=cmd|' /C calc'!A0"],
			[3, 'reference', '@SUM(A1)'],
			[4, 'reference', '-2+3']
		]);
		expect(formulaCellIssues(table.columns, [{ star: 'x', values: { period_days: -1 } }])).toEqual([]);
	});

	test('issues become field errors with line/column paths', () => {
		expect(
			issuesToFieldErrors([
				{ line: 3, column: 'mag_V', value: 'abc', reason: 'is not a number' },
				{ line: null, column: null, value: null, reason: 'the file has no data rows' }
			])
		).toEqual([
			{ path: 'line/3/mag_V', message: '"abc": is not a number' },
			{ path: 'file', message: 'the file has no data rows' }
		]);
	});

	test('a revision with Wesenheit and single-band columns seals (band ids keep their case)', () => {
		const table = parseCalibratorTable(
			'star,population,period_days,mag_W_VI,mag_err_Ks\nA,classical_fundamental,5,1,0.1'
		);
		const sealed = sealCalibratorRevision({
			calibrator_set: 'demo',
			revision: 1,
			source_file: { name: 'a.csv', media_type: 'text/csv', digest: `sha256:${'0'.repeat(64)}` },
			columns: table.columns,
			rows: table.rows
		});
		expect(sealed.digest).toMatch(/^sha256:[0-9a-f]{64}$/);
	});
});
