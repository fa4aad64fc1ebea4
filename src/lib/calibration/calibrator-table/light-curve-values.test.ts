import { describe, expect, test } from 'vitest';
import { calibratorRevisionDigest, sealCalibratorRevision } from '../digest';
import { CalibrationInputError } from '../types';
import { LIGHT_CURVE_COLUMN, parseCalibratorTable, takeLightCurveValues, type LightCurveAnalysisValues } from './index';

// Invented stars of an invented survey; the analyses stand for stored light-curve results.
const TABLE = [
	'star,cross_id,population,period_days,mag_V,reference',
	'Kestrel A,KCS-1,classical_fundamental,,15.80,Invented 2026',
	'Kestrel B,KCS-2,classical_fundamental,5.1,,Invented 2026',
	'Kestrel C,KCS-3,classical_fundamental,7.7,14.70,Invented 2026'
].join('\n');

const UPLOAD = '6f1b3f6e-9c1d-4c3e-8a57-0a1f6d1e2b3c';
const DIGEST = `sha256:${'ab'.repeat(32)}`;

let resultCount = 0;

function analysis(star: string, band: string | null, extra: Partial<LightCurveAnalysisValues> = {}) {
	resultCount += 1;
	return {
		result: `00000000-0000-4000-8000-${String(resultCount).padStart(12, '0')}`,
		upload: UPLOAD,
		sourceDigest: DIGEST,
		engineVersion: '1.0.0',
		star,
		band,
		population: 'classical_fundamental',
		periodDays: 3.3001,
		periodErrDays: 2e-4,
		meanMagIntensity: 15.21,
		meanMagIntensityErr: 0.003,
		warnings: [],
		...extra
	} satisfies LightCurveAnalysisValues;
}

function parsed() {
	const table = parseCalibratorTable(TABLE, {}, undefined, { filledLater: ['period_days'] });
	expect(table.issues).toEqual([]);
	return table;
}

describe('taking periods and mean magnitudes from light-curve analyses', () => {
	test('without the option, an empty period is refused as before', () => {
		const table = parseCalibratorTable(TABLE);
		expect(table.issues).toEqual([{ line: 2, column: 'period_days', value: '', reason: 'is missing' }]);
	});

	test('blank cells are filled from the most precise band, errors come along, the table’s own values stay', () => {
		const analyses = [
			analysis('Kestrel A', 'V', { periodDays: 3.3004, periodErrDays: 5e-4, meanMagIntensity: 15.9 }),
			analysis('Kestrel A', 'Ic', { periodDays: 3.3001, periodErrDays: 1e-4, meanMagIntensity: 15.3 }),
			analysis('KCS-2', 'V', { periodDays: 5.1003, meanMagIntensity: 15.05, meanMagIntensityErr: 0.004 })
		];
		const take = takeLightCurveValues(parsed(), analyses, 'blank');
		expect(take.issues).toEqual([]);
		const [a, b, c] = take.rows;
		// Kestrel A: the period from Ic (σ 1e-4 beats 5e-4); its own V magnitude kept; Ic added.
		expect(a.values).toMatchObject({ period_days: 3.3001, period_err_days: 1e-4, mag_V: 15.8, mag_Ic: 15.3 });
		// Kestrel B, matched by cross_id: the table's period stays; its empty V is filled.
		expect(b.values).toMatchObject({ period_days: 5.1, period_err_days: null, mag_V: 15.05, mag_err_V: 0.004 });
		// Kestrel C has no analysis: untouched, with nulls in the added columns.
		expect(c.values).toMatchObject({ period_days: 7.7, mag_V: 14.7, mag_Ic: null, period_err_days: null });
		expect(take.columns.slice(-4)).toEqual([
			{ field: 'period_err_days', source_column: LIGHT_CURVE_COLUMN, unit: 'd' },
			{ field: 'mag_Ic', source_column: LIGHT_CURVE_COLUMN, unit: 'mag' },
			{ field: 'mag_err_Ic', source_column: LIGHT_CURVE_COLUMN, unit: 'mag' },
			{ field: 'mag_err_V', source_column: LIGHT_CURVE_COLUMN, unit: 'mag' }
		]);
		expect(take.sources.map((s) => `${s.star}:${s.field}=${s.value}<${s.light_curve.band}`)).toEqual([
			'Kestrel A:period_days=3.3001<Ic',
			'Kestrel A:period_err_days=0.0001<Ic',
			'Kestrel A:mag_Ic=15.3<Ic',
			'Kestrel A:mag_err_Ic=0.003<Ic',
			'Kestrel B:mag_V=15.05<V',
			'Kestrel B:mag_err_V=0.004<V'
		]);
		expect(take.sources[0].light_curve).toEqual({
			result: analyses[1].result,
			upload: UPLOAD,
			source_digest: DIGEST,
			band: 'Ic',
			quantity: 'period_days',
			engine_version: '1.0.0'
		});
		expect(take.sources.every((source) => source.replaced === null)).toBe(true);
	});

	test('"all" replaces the table’s values and records what each replaced', () => {
		const take = takeLightCurveValues(parsed(), [analysis('Kestrel C', 'V', { periodDays: 7.7012 })], 'all');
		const period = take.sources.find((source) => source.field === 'period_days')!;
		const magnitude = take.sources.find((source) => source.field === 'mag_V')!;
		expect(period).toMatchObject({ star: 'Kestrel C', value: 7.7012, replaced: 7.7 });
		expect(magnitude).toMatchObject({ value: 15.21, replaced: 14.7 });
		expect(take.rows[2].values.period_days).toBe(7.7012);
		// Kestrel A still has no period: refused by its line and column.
		expect(take.issues).toEqual([
			{
				line: 2,
				column: 'period_days',
				value: '',
				reason: 'is empty, and no light-curve analysis of Kestrel A fills it'
			}
		]);
	});

	test('unused analyses and cautions are reported, not silently dropped', () => {
		const take = takeLightCurveValues(
			parsed(),
			[
				analysis('Somebody Else', 'V'),
				analysis('Kestrel A', null, { population: 'type2_bl_her', warnings: ['period_below_rr_lyrae_limit'] }),
				analysis('Kestrel A', 'Kp')
			],
			'blank'
		);
		expect(take.notices).toEqual([
			{ star: 'Somebody Else', band: 'V', reason: 'no row of the table has this star' },
			{
				star: 'Kestrel A',
				band: null,
				reason: "analysed as type2_bl_her, but the row's population is classical_fundamental"
			},
			{ star: 'Kestrel A', band: null, reason: 'the analysis warns: period_below_rr_lyrae_limit' },
			{ star: 'Kestrel A', band: null, reason: 'the series has no band, so its mean magnitude was not used' },
			{ star: 'Kestrel A', band: 'Kp', reason: 'Kp is not a catalogued band, so its mean magnitude was not used' }
		]);
		// The period still came from one of them.
		expect(take.rows[0].values.period_days).toBe(3.3001);
	});

	test('a revision carrying its value sources seals, and a source that disagrees with its row is refused', () => {
		const take = takeLightCurveValues(parsed(), [analysis('Kestrel A', 'Ic')], 'blank');
		const content = {
			calibrator_set: 'kestrel-anchors',
			revision: 2,
			source_file: { name: 'kestrel.csv', media_type: 'text/csv', digest: DIGEST },
			columns: take.columns,
			rows: take.rows,
			value_sources: take.sources
		};
		const sealed = sealCalibratorRevision(content);
		expect(sealed.digest).toMatch(/^sha256:[0-9a-f]{64}$/);
		// The sources are part of what the digest covers.
		const { value_sources: _sources, ...withoutSources } = content;
		expect(calibratorRevisionDigest(withoutSources)).not.toBe(sealed.digest);

		const tampered = structuredClone(content);
		tampered.value_sources[0].value = 3.4;
		expect(() => sealCalibratorRevision(tampered)).toThrow(CalibrationInputError);
		const twice = structuredClone(content);
		twice.value_sources.push(twice.value_sources[0]);
		expect(() => sealCalibratorRevision(twice)).toThrow(/names a value twice/);
	});
});
