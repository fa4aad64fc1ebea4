import { describe, expect, test } from 'vitest';
import { parseHostCsv } from './host-csv';
import { worksheetCsv, type WorksheetRecord } from './export';

const HEADER = 'id,period_days,mean_mag,mean_mag_err,ebv,ebv_err,feh,feh_err';

describe('reading a host galaxy’s Cepheids from CSV', () => {
	test('reads stars, leaves empty optional cells null and keeps RFC 4180 quoted commas inside a cell', () => {
		const result = parseHostCsv(`${HEADER}\n"C-1, north",12.5,25.10,0.05,0.12,0.02,-0.3,0.1\nC-2,30,24.2,0.04,,,,\n`);
		expect(result).toEqual({
			ok: true,
			stars: [
				{
					id: 'C-1, north',
					period_days: 12.5,
					mean_mag: 25.1,
					mean_mag_err: 0.05,
					ebv: 0.12,
					ebv_err: 0.02,
					feh: -0.3,
					feh_err: 0.1
				},
				{
					id: 'C-2',
					period_days: 30,
					mean_mag: 24.2,
					mean_mag_err: 0.04,
					ebv: null,
					ebv_err: null,
					feh: null,
					feh_err: null
				}
			]
		});
	});

	test('every bad cell is named by its line in the file, column, value and reason (comments and blank lines counted)', () => {
		const text = `# invented host\n${HEADER}\nA,10,25,0.05,,,,\n\nB,-2,25,0.05,,,,\nC,10,bright,-0.1,,,,\nA,11,25,0.05,,,,\nD,10\n`;
		const result = parseHostCsv(text);
		expect(result.ok).toBe(false);
		if (result.ok) return;
		expect(result.errors).toEqual([
			{ line: 5, column: 'period_days', value: '-2', message: 'must be greater than 0' },
			{ line: 6, column: 'mean_mag', value: 'bright', message: 'is not a number' },
			{ line: 6, column: 'mean_mag_err', value: '-0.1', message: 'must not be negative' },
			{ line: 7, column: 'id', value: 'A', message: 'the same id is on line 3' },
			{ line: 8, column: '', value: 'D,10', message: 'has 2 cells, the header has 8' }
		]);
	});

	test('a missing required column and an unknown column are refused at the header', () => {
		const result = parseHostCsv('id,period_days,mag\nA,10,25\n');
		expect(result.ok).toBe(false);
		if (result.ok) return;
		expect(result.errors.map((e) => `${e.line}:${e.column}:${e.message.split(';')[0]}`)).toEqual([
			'1:mag:unknown column',
			'1:mean_mag:required column is missing',
			'1:mean_mag_err:required column is missing'
		]);
	});

	test('the worksheet’s own CSV export reads back to the same stars, with the ref and digest in its # lines', () => {
		const stars = [
			{
				id: '=HYPERLINK("x")',
				period_days: 12.5,
				mean_mag: 25.1,
				mean_mag_err: 0.05,
				ebv: null,
				ebv_err: null,
				feh: -0.3,
				feh_err: 0.1
			},
			{
				id: 'B',
				period_days: 30,
				mean_mag: 24.2,
				mean_mag_err: 0.04,
				ebv: 0.1,
				ebv_err: 0.01,
				feh: null,
				feh_err: null
			}
		];
		const result = (id: string) => ({
			id,
			log_period: 1,
			abs_mag: -4,
			abs_mag_err: 0.02,
			mu0: 29,
			mu0_err: 0.1,
			distance_mpc: 6.3,
			distance_mpc_err: 0.3,
			distance_mpc_p16: 6.0,
			distance_mpc_p84: 6.6,
			rejected: false,
			warnings: []
		});
		const record = {
			distanceRequest: { relation: 'invented@2', stars },
			distances: {
				relation: { ref: 'invented@2', digest: `sha256:${'a'.repeat(64)}`, status: 'current', band: 'V' },
				settings: {
					extinction_law: 'ccm89',
					r_v: 3.1,
					clip_sigma: 3,
					foreground_ebv_err: 0.02,
					host_metallicity: null,
					adopted_slope_err: null,
					crowding_correction: null
				},
				distance_convention: 'distance_mpc is the median',
				results: stars.map((star) => result(star.id)),
				combined: {
					mu0: 29,
					mu0_err_stat: 0.07,
					mu0_err_sys: 0.03,
					distance_mpc: 6.3,
					distance_mpc_err: 0.2,
					distance_mpc_p16: 6.0,
					distance_mpc_p84: 6.6,
					n_used: 2,
					n_assumed_metallicity: 1,
					rejected: [],
					error_budget: [
						{ id: 'relation_coefficients', label: 'coefficients', value: 0.02 },
						{ id: 'foreground_reddening', label: 'foreground', value: 0.0224 }
					]
				},
				warnings: []
			},
			hubbleRequest: null,
			hubble: null
		} as unknown as WorksheetRecord;
		const text = worksheetCsv(record, new Date('2026-12-01T00:00:00Z'));
		expect(text).toContain(`# relation: invented@2\n# relation_digest: sha256:${'a'.repeat(64)}\n`);
		// The budget term by term and the interval travel with the file.
		expect(text).toContain('# mu0_sys_foreground_reddening: 0.0224 (foreground)\n');
		expect(text).toContain('# distance_mpc_p84: 6.6\n');
		// OWASP CSV injection: a text cell that a spreadsheet would run is written with a leading quote.
		expect(text).toContain(`"'=HYPERLINK(""x"")"`);
		const reread = parseHostCsv(text);
		expect(reread.ok && reread.stars.map((s) => [s.id, s.period_days, s.ebv, s.feh])).toEqual([
			['\'=HYPERLINK("x")', 12.5, null, -0.3],
			['B', 30, 0.1, null]
		]);
	});
});
