import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { CalibrationInputError } from '../types';
import { ALIAS_AMBIGUITY_RATIO } from './aliases';
import { analyseLightCurve, analyseLightCurves } from './light-curve-analysis';
import type { LightCurvePoint, LightCurveSeries } from './series';

function ogle(name: string): LightCurveSeries {
	const points = readReferenceFile('light-curves', `${name}.dat`)
		.trim()
		.split('\n')
		.map((line) => line.trim().split(/\s+/).map(Number) as unknown as LightCurvePoint);
	return { id: name, band: 'Ic', timeReference: 'HJD', timeOffsetDays: 2450000, points };
}

/** Invented star: m(t) from `curve`, epochs from `times`, fixed error, small deterministic scatter. */
function invented(
	id: string,
	times: number[],
	curve: (t: number) => number,
	extra: Partial<LightCurveSeries> = {}
): LightCurveSeries {
	return {
		id,
		timeReference: 'MJD',
		timeOffsetDays: 0,
		points: times.map((t, i) => [t, curve(t) + 0.004 * Math.sin(12.9898 * i), 0.01] as LightCurvePoint),
		...extra
	};
}

const spread = (n: number, start: number, span: number) =>
	Array.from({ length: n }, (_, i) => start + span * ((i * 0.754877666) % 1));

// Catalogue periods and mean I: OGLE-IV Collection of Variable Stars (Soszyński et al. 2015, AcA 65, 297),
// as listed in the reference-data README and ogle-magellanic-cepheids/*.csv. Light curves: OGLE-III I band
// (Soszyński et al. 2008, AcA 58, 163), read in place.
//
// Period tolerance: 3σ of the reported error, or 2% of the periodogram peak width P²/T, whichever is larger.
// The catalogue periods come from later OGLE-IV seasons, and Cepheid periods drift secularly, so this
// data set's statistical error alone can be smaller than the real difference; 2% of a peak width still
// fails for a wrong peak (an alias is ≥ 1 width away) and for an unrefined grid peak (up to 10% off).
// Mean I tolerance 0.03 mag: OGLE-III and OGLE-IV photometry differ in epochs and calibration at the
// ~0.02 mag level (from memory). OGLE-LMC-CEP-0227 is a Cepheid in an eclipsing binary (Pietrzyński et
// al. 2010, Nature 468, 542; from memory), whose eclipses pull a Fourier mean faint: 0.05 mag there.
const cepheids = [
	{ name: 'OGLE-LMC-CEP-0002', periodDays: 3.118149, meanI: 15.691, meanTolerance: 0.03 },
	{ name: 'OGLE-LMC-CEP-0005', periodDays: 5.6119491, meanI: 14.651, meanTolerance: 0.03 },
	{ name: 'OGLE-LMC-CEP-0227', periodDays: 3.7970782, meanI: 14.408, meanTolerance: 0.05 },
	{ name: 'OGLE-LMC-CEP-0674', periodDays: 4.952988, meanI: 14.669, meanTolerance: 0.03 },
	{ name: 'OGLE-SMC-CEP-0668', periodDays: 8.0605223, meanI: 14.411, meanTolerance: 0.03 }
];

describe.skipIf(!hasReferenceData('light-curves'))(`OGLE light curves — ${missingReason('light-curves')}`, () => {
	test.each(cepheids)(
		'$name: period and mean I match the catalogue, significant, no RR Lyrae flag',
		({ name, periodDays, meanI, meanTolerance }) => {
			const result = analyseLightCurve(ogle(name));
			const tolerance = Math.max(3 * result.periodErrDays, (0.02 * result.periodDays ** 2) / result.baselineDays);
			expect(Math.abs(result.periodDays - periodDays)).toBeLessThanOrEqual(tolerance);
			expect(result.periodErrDays).toBeGreaterThan(0);
			expect(Math.abs(result.meanMagIntensity.value - meanI)).toBeLessThanOrEqual(meanTolerance);
			expect(result.falseAlarmProbability).toBeLessThan(1e-20);
			expect(result.warnings.map((warning) => warning.code)).not.toContain('period_below_rr_lyrae_limit');
			expect(result.timeFrame).toBe('HJD');
			expect(result.epochOfMaximum).toBeGreaterThan(2450000);
		}
	);

	test('OGLE-BLG-RRLYR-02924 is flagged as RR Lyrae range when taken for a fundamental-mode Cepheid', () => {
		const result = analyseLightCurve(ogle('OGLE-BLG-RRLYR-02924'), { population: 'classical_fundamental' });
		expect(result.periodDays).toBeLessThan(1);
		expect(result.warnings).toContainEqual(
			expect.objectContaining({ code: 'period_below_rr_lyrae_limit', star: 'OGLE-BLG-RRLYR-02924' })
		);
	});

	test('the eclipsing-binary Cepheid OGLE-LMC-CEP-0227 gets a poor-model warning, OGLE-LMC-CEP-0674 does not', () => {
		const codes = (name: string) => analyseLightCurve(ogle(name)).warnings.map((warning) => warning.code);
		expect(codes('OGLE-LMC-CEP-0227')).toContain('light_curve_model_poor');
		expect(codes('OGLE-LMC-CEP-0674')).not.toContain('light_curve_model_poor');
	});
});

describe('light-curve analysis on invented stars', () => {
	const period = 4.3;
	const epochOfMaximumMjd = 55000.4;
	// m = 15 + 0.3 sin(2π(t − t₀)/P) is brightest at phase 0.75; shifting t₀ by −0.75 P puts maximum light at t₀.
	const sine = (t: number) => 15 + 0.3 * Math.sin((2 * Math.PI * (t - epochOfMaximumMjd)) / period + (3 * Math.PI) / 2);

	test('finds period and epoch of maximum light (MJD input → JD frame), same result twice', () => {
		const series = invented('sine', spread(120, 54800, 700), sine);
		const first = analyseLightCurve(series);
		const second = analyseLightCurve(series);
		expect(second).toEqual(first);
		expect(first.timeFrame).toBe('JD');
		expect(Math.abs(first.periodDays - period)).toBeLessThan(3 * first.periodErrDays + 1e-9);
		const cycles = (first.epochOfMaximum - 2400000.5 - epochOfMaximumMjd) / period;
		expect(Math.abs(cycles - Math.round(cycles)) * period).toBeLessThan(0.01);
		expect(first.amplitude).toBeCloseTo(0.6, 2);
	});

	test('a curve whose periodogram peaks at the first harmonic still gets the true period (BIC over candidates)', () => {
		// Two unequal minima per cycle, like a contact binary: the sinusoid at 2f dominates the periodogram.
		const truePeriod = 2.2;
		const curve = (t: number) =>
			15 + 0.25 * Math.cos((4 * Math.PI * t) / truePeriod) + 0.04 * Math.cos((2 * Math.PI * t) / truePeriod);
		const result = analyseLightCurve(invented('double', spread(200, 0, 500), curve));
		expect(result.periodDays).toBeCloseTo(truePeriod, 4);
	});

	test('nightly sampling at one sidereal time raises the one-day alias flag', () => {
		const nights = Array.from({ length: 150 }, (_, i) => i * 0.99726957 + 0.05 * Math.sin(i * 2.1));
		const result = analyseLightCurve(invented('nightly', nights, sine));
		expect(result.aliases.some((alias) => alias.kind === 'one_day' && alias.powerRatio >= ALIAS_AMBIGUITY_RATIO)).toBe(
			true
		);
		expect(result.warnings.map((warning) => warning.code)).toContain('alias_ambiguity');
	});

	test('bad input is refused with the point index and field', () => {
		const series = invented('broken', spread(30, 0, 100), sine);
		const points = series.points.map((point) => [...point] as [number, number, number]);
		points[17][2] = -0.01;
		let caught: unknown;
		try {
			analyseLightCurve({ ...series, points });
		} catch (error) {
			caught = error;
		}
		expect(caught).toBeInstanceOf(CalibrationInputError);
		expect((caught as CalibrationInputError).issues).toEqual([
			expect.objectContaining({ star: 'broken', field: 'points[17].err' })
		]);
	});

	test('two bands of one star in HJD and BJD_TDB are refused together, not mixed', () => {
		const v = invented('star-7', spread(40, 0, 200), sine, { band: 'V', timeReference: 'HJD' });
		const i = invented('star-7', spread(40, 0, 200), sine, { band: 'Ic', timeReference: 'BJD_TDB' });
		expect(() => analyseLightCurves([v, i])).toThrow(CalibrationInputError);
		expect(analyseLightCurves([v, { ...i, timeReference: 'HJD' }]).map((result) => result.band)).toEqual(['V', 'Ic']);
	});
});
