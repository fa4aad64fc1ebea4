import { Matrix, QrDecomposition } from 'ml-matrix';
import { describe, expect, test } from 'vitest';
import { ASTROPY_MISSING_REASON, astropyVersion, hasAstropy, runPython } from '../../../../tests/support/astropy';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { fastPeriodogram } from './fast-periodogram';
import { automaticFrequencyGrid, gridFrequencies, gridFrequency, type FrequencyGrid } from './frequency-grid';
import { exactPeriodogram, powerAt, powersAt } from './periodogram';
import { prepareSeries, type LightCurvePoint } from './series';

function ogleSeries(name: string) {
	const points = readReferenceFile('light-curves', `${name}.dat`)
		.trim()
		.split('\n')
		.map((line) => line.trim().split(/\s+/).map(Number) as unknown as LightCurvePoint);
	return { points, prepared: prepareSeries({ id: name, timeReference: 'HJD', timeOffsetDays: 2450000, points }) };
}

/** Invented, deterministic series: uneven times, a skewed light curve and varied errors. */
function inventedSeries(n = 200) {
	const points: LightCurvePoint[] = Array.from({ length: n }, (_, i) => {
		const t = 1000 * ((i * 0.754877666) % 1) + 0.3 * Math.sin(i);
		const phase = t / 4.2;
		const mag = 15 + 0.3 * Math.sin(2 * Math.PI * phase) + 0.1 * Math.cos(4 * Math.PI * phase) + 0.02 * Math.sin(7 * i);
		return [t, mag, 0.01 + 0.02 * ((i * 0.618034) % 1)];
	});
	return prepareSeries({ id: 'invented', timeReference: 'JD', timeOffsetDays: 0, points });
}

function argmax(values: ArrayLike<number>): number {
	let best = 0;
	for (let k = 1; k < values.length; k++) if (values[k] > values[best]) best = k;
	return best;
}

describe('generalised Lomb–Scargle, exact', () => {
	// Definition, ZK09 eq. 4–20: p = 1 − χ²(a + b cos ωt + c sin ωt)/χ²(a), χ² weighted by σ⁻²; here the
	// two χ² come from an independent QR least-squares fit.
	test.each([0.05, 0.2381, 1.3, 4.9])('power at f = %s d⁻¹ is 1 − χ²_sine/χ²_const (ZK09)', (frequency) => {
		const series = inventedSeries();
		const n = series.t.length;
		const design = new Matrix(n, 3);
		const target = new Matrix(n, 1);
		for (let i = 0; i < n; i++) {
			const s = 1 / series.err[i];
			design.set(i, 0, s);
			design.set(i, 1, s * Math.cos(2 * Math.PI * frequency * series.t[i]));
			design.set(i, 2, s * Math.sin(2 * Math.PI * frequency * series.t[i]));
			target.set(i, 0, s * series.mag[i]);
		}
		const beta = new QrDecomposition(design).solve(target);
		const residual = target.sub(design.mmul(beta));
		const chiSine = residual.dot(residual);
		let chiConst = 0;
		for (let i = 0; i < n; i++) chiConst += ((series.mag[i] - series.weightedMeanMag) / series.err[i]) ** 2;
		expect(powerAt(series, frequency)).toBeCloseTo(1 - chiSine / chiConst, 12);
	});

	test('the angle-addition recurrence matches direct evaluation over 100 000 steps (drift ≤ 1e-10)', () => {
		const series = inventedSeries(60);
		const grid: FrequencyGrid = { step: 5e-5, firstIndex: 1, count: 100_000 };
		const recurrent = exactPeriodogram(series, grid).power;
		const direct = powersAt(series, gridFrequencies(grid));
		let worst = 0;
		for (let k = 0; k < grid.count; k++) worst = Math.max(worst, Math.abs(recurrent[k] - direct[k]));
		expect(worst).toBeLessThan(1e-10);
	});
});

describe('fast periodogram (Press & Rybicki extirpolation)', () => {
	test('agrees with the exact one: same peak, powers within 1e-3', () => {
		const series = inventedSeries();
		const grid = automaticFrequencyGrid({ baselineDays: series.baselineDays, minPeriodDays: 0.5 });
		const exact = exactPeriodogram(series, grid).power;
		const fast = fastPeriodogram(series, grid).power;
		let worst = 0;
		for (let k = 0; k < grid.count; k++) worst = Math.max(worst, Math.abs(exact[k] - fast[k]));
		expect(argmax(fast)).toBe(argmax(exact));
		expect(gridFrequency(grid, argmax(fast))).toBeCloseTo(1 / 4.2, 3);
		expect(worst).toBeLessThan(1e-3);
	});
});

const ready = hasAstropy() && hasReferenceData('light-curves');
const skipReason = !hasAstropy() ? ASTROPY_MISSING_REASON : missingReason('light-curves');

// astropy.timeseries.LombScargle (VanderPlas 2018, ApJS 236, 16), Debian python3-astropy, run in this test;
// data: OGLE-III I-band light curves (Soszyński et al. 2008, AcA 58, 163), read in place.
describe.skipIf(!ready)(
	`against astropy LombScargle (${astropyVersion() ?? 'absent'}) — ${ready ? 'OGLE-III light curves' : skipReason}`,
	() => {
		const cases = [
			{ name: 'OGLE-LMC-CEP-0002', minPeriodDays: 1 },
			{ name: 'OGLE-BLG-RRLYR-02924', minPeriodDays: 0.2 }
		];
		const results = cases.map(({ name, minPeriodDays }) => {
			const { points, prepared } = ogleSeries(name);
			const grid = automaticFrequencyGrid({ baselineDays: prepared.baselineDays, minPeriodDays });
			const frequencies = Array.from(gridFrequencies(grid));
			const reference = runPython<{ exact: number[]; fast: number[] }>(
				`from astropy.timeseries import LombScargle
import numpy as np
p = np.array(data['points'])
ls = LombScargle(p[:, 0], p[:, 1], p[:, 2], fit_mean=True, center_data=True, normalization='standard')
f = np.array(data['frequencies'])
print(json.dumps({'exact': ls.power(f, method='cython').tolist(), 'fast': ls.power(f, method='fast').tolist()}))`,
				{ points, frequencies }
			);
			return { name, prepared, grid, reference };
		});

		test.each(cases.map((entry, i) => [entry.name, i] as const))(
			'%s: exact powers agree to 1e-6 on the same grid (standard normalisation, dy, fit_mean, center_data)',
			(_name, i) => {
				const { prepared, grid, reference } = results[i];
				const power = exactPeriodogram(prepared, grid).power;
				let worst = 0;
				for (let k = 0; k < grid.count; k++) worst = Math.max(worst, Math.abs(power[k] - reference.exact[k]));
				expect(reference.exact).toHaveLength(grid.count);
				expect(worst).toBeLessThan(1e-6);
			}
		);

		test.each(cases.map((entry, i) => [entry.name, i] as const))(
			"%s: the fast method finds the same peak frequency as astropy's fast method",
			(_name, i) => {
				const { prepared, grid, reference } = results[i];
				const ours = argmax(fastPeriodogram(prepared, grid).power);
				const theirs = argmax(reference.fast);
				expect(Math.abs(gridFrequency(grid, ours) - gridFrequency(grid, theirs))).toBeLessThanOrEqual(grid.step);
				expect(ours).toBe(argmax(reference.exact));
			}
		);
	}
);
