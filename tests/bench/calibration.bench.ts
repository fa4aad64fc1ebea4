/**
 * Benchmarks of the calibration core. Each case times the real code and, in the same run, a baseline
 * that does the least work any implementation must do on the same data, so the ratio is meaningful on
 * any machine:
 * - fits: the closed-form weighted straight-line fit from five running sums (Σw, Σwx, Σwy, Σwx², Σwxy) —
 *   the arithmetic floor of a WLS fit; the ratio is the price of QR, clipping rounds, validation, residuals;
 * - bootstrap: the same closed form on the same number of resamples, drawing indices with the same
 *   seeded xoroshiro128+ generator;
 * - apply: one Math.log and one Math.exp per star over the same arrays — the two transcendental calls
 *   a distance needs (log P in, 10^(μ/5+1) out) in their fastest form; the ratio is the price of extinction, metallicity, the error budget and the
 *   validity flags;
 * - light-curve values: reading the same table (parseCalibratorTable), which every upload pays anyway;
 *   the ratio is what taking periods and means from analyses adds to an upload.
 */
import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { uniformInt } from 'pure-rand/distribution/uniformInt';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { applyRelationColumnar } from '../../src/lib/calibration/apply';
import {
	parseCalibratorTable,
	takeLightCurveValues,
	type LightCurveAnalysisValues
} from '../../src/lib/calibration/calibrator-table/index';
import { fitLinearRelation, type CalibratorPoint } from '../../src/lib/calibration/fit';
import type { Relation } from '../../src/lib/calibration/types';

export interface BenchCase {
	name: string;
	/** Items processed per run (stars or resamples × stars). */
	items: number;
	itemLabel: string;
	run: () => unknown;
	baseline: () => unknown;
	baselineLabel: string;
	/** Pass/fail target on the median time, if any. */
	target?: { description: string; met: (medianMs: number) => boolean };
	repeats: number;
}

function gaussianSource(seed: number): () => number {
	const rng = xoroshiro128plus(seed);
	return () => Math.sqrt(-2 * Math.log(1 - uniformFloat64(rng))) * Math.cos(2 * Math.PI * uniformFloat64(rng));
}

/** Invented calibrators from M = −5.9 − 3.3(log P − 1), σ_int 0.08, 2% outliers. */
function syntheticCalibrators(n: number, seed: number): CalibratorPoint[] {
	const gauss = gaussianSource(seed);
	return Array.from({ length: n }, (_, i) => {
		const logPeriod = 0.4 + 1.3 * ((i * 0.618034) % 1);
		const absMagErr = 0.03 + 0.05 * ((i * 0.414214) % 1);
		const outlier = i % 50 === 0 ? 1.2 : 0;
		return {
			star: `bench-${i}`,
			logPeriod,
			absMag: -5.9 - 3.3 * (logPeriod - 1) + Math.hypot(absMagErr, 0.08) * gauss() + outlier,
			absMagErr
		};
	});
}

/** Closed-form weighted least squares for y = a + b·x (the baseline arithmetic). */
function closedFormWls(x: Float64Array, y: Float64Array, w: Float64Array, index?: Int32Array): number {
	let sw = 0;
	let swx = 0;
	let swy = 0;
	let swxx = 0;
	let swxy = 0;
	const n = index ? index.length : x.length;
	for (let k = 0; k < n; k++) {
		const i = index ? index[k] : k;
		const wi = w[i];
		sw += wi;
		swx += wi * x[i];
		swy += wi * y[i];
		swxx += wi * x[i] * x[i];
		swxy += wi * x[i] * y[i];
	}
	return (sw * swxy - swx * swy) / (sw * swxx - swx * swx);
}

function columnsOf(points: CalibratorPoint[]) {
	return {
		x: Float64Array.from(points, (p) => p.logPeriod - 1),
		y: Float64Array.from(points, (p) => p.absMag),
		w: Float64Array.from(points, (p) => 1 / p.absMagErr ** 2)
	};
}

const benchRelation: Relation = {
	bandId: 'V',
	population: 'classical_fundamental',
	magnitudeSystem: 'Vega',
	coefficients: { zeroPoint: -3.944, slope: -2.67, metallicityTerm: -0.2 },
	pivotLogPeriod: 1,
	pivotFeh: 0,
	covariance: {
		axes: ['zero_point', 'slope', 'metallicity_term'],
		matrix: [
			[0.0008, 0.0004, 0.0002],
			[0.0004, 0.009, -0.0003],
			[0.0002, -0.0003, 0.0025]
		]
	},
	intrinsicScatter: 0.21,
	validity: { logPeriodMin: 0.4, logPeriodMax: 1.8, fehMin: -0.6, fehMax: 0.4 },
	extinctionLaw: 'ccm89',
	rV: 3.1
};

export function buildCases(): BenchCase[] {
	const fitPoints = syntheticCalibrators(10_000, 11);
	const fitColumns = columnsOf(fitPoints);
	const bootPoints = syntheticCalibrators(1_000, 12);
	const bootColumns = columnsOf(bootPoints);
	const resamples = 1_000;

	const n = 1_000_000;
	const gauss = gaussianSource(13);
	const columns = {
		periodDays: new Float64Array(n),
		mag: new Float64Array(n),
		magErr: new Float64Array(n),
		ebv: new Float64Array(n),
		ebvErr: new Float64Array(n),
		feh: new Float64Array(n),
		fehErr: new Float64Array(n)
	};
	for (let i = 0; i < n; i++) {
		columns.periodDays[i] = 10 ** (0.3 + 1.6 * ((i * 0.618034) % 1));
		columns.mag[i] = 24 + 0.3 * gauss();
		columns.magErr[i] = 0.05;
		columns.ebv[i] = 0.1 + 0.02 * gauss();
		columns.ebvErr[i] = 0.02;
		columns.feh[i] = -0.2 + 0.2 * gauss();
		columns.fehErr[i] = 0.1;
	}
	const scratch = new Float64Array(n);

	// An invented 20 000-row table whose first 500 stars have analyses in V and Ic, periods left empty.
	const tableRows = 20_000;
	const analysed = 500;
	const tableText = [
		'star,population,period_days,mag_V,parallax_mas,parallax_err_mas',
		...Array.from(
			{ length: tableRows },
			(_, i) => `KCS-${i},classical_fundamental,${i < analysed ? '' : (3 + (i % 40)).toFixed(3)},14.5,0.3,0.02`
		)
	].join('\n');
	const lightCurveTable = parseCalibratorTable(tableText, {}, undefined, { filledLater: ['period_days'] });
	const analyses: LightCurveAnalysisValues[] = Array.from({ length: analysed }, (_, i) =>
		['V', 'Ic'].map((band, b) => ({
			result: `00000000-0000-4000-8000-${String(2 * i + b).padStart(12, '0')}`,
			upload: '00000000-0000-4000-8000-000000000000',
			sourceDigest: `sha256:${'0'.repeat(64)}`,
			engineVersion: '1.0.0',
			star: `KCS-${i}`,
			band,
			population: 'classical_fundamental',
			periodDays: 3 + (i % 40),
			periodErrDays: 1e-4 * (1 + b),
			meanMagIntensity: 14.5,
			meanMagIntensityErr: 0.003,
			warnings: []
		}))
	).flat();

	return [
		{
			name: 'WLS + 3σ clip, 10 000 calibrators',
			items: fitPoints.length,
			itemLabel: 'stars',
			repeats: 15,
			run: () => fitLinearRelation(fitPoints, { method: 'wls', clipping: { sigma: 3, maxIterations: 10 } }),
			baseline: () => closedFormWls(fitColumns.x, fitColumns.y, fitColumns.w),
			baselineLabel: 'closed-form WLS sums, same arrays'
		},
		{
			name: 'bootstrap 1 000 × 1 000 calibrators (WLS)',
			items: resamples * bootPoints.length,
			itemLabel: 'star-draws',
			repeats: 5,
			run: () => fitLinearRelation(bootPoints, { method: 'wls', bootstrap: { resamples, seed: 2026 } }),
			baseline: () => {
				const rng = xoroshiro128plus(2026);
				const index = new Int32Array(bootPoints.length);
				let sum = 0;
				for (let r = 0; r < resamples; r++) {
					for (let k = 0; k < index.length; k++) index[k] = uniformInt(rng, 0, index.length - 1);
					sum += closedFormWls(bootColumns.x, bootColumns.y, bootColumns.w, index);
				}
				return sum;
			},
			baselineLabel: 'closed-form WLS on 1 000 seeded resamples',
			target: { description: '< 1 s', met: (ms) => ms < 1000 }
		},
		{
			name: 'apply relation, 1 000 000 stars (columnar)',
			items: n,
			itemLabel: 'stars',
			repeats: 15,
			run: () => applyRelationColumnar(benchRelation, columns),
			baseline: () => {
				for (let i = 0; i < n; i++) scratch[i] = Math.exp(0.2 * Math.log(columns.periodDays[i]));
				return scratch;
			},
			baselineLabel: 'Math.log + Math.exp per star, same arrays',
			target: { description: '≥ 5 M stars/s', met: (ms) => n / (ms / 1000) >= 5e6 }
		},
		{
			name: 'light-curve values into a 20 000-row table (1 000 analyses)',
			items: tableRows,
			itemLabel: 'rows',
			repeats: 15,
			run: () => takeLightCurveValues(lightCurveTable, analyses, 'blank'),
			baseline: () => parseCalibratorTable(tableText, {}, undefined, { filledLater: ['period_days'] }),
			baselineLabel: 'reading the same table (parseCalibratorTable)',
			target: { description: '< 50 ms', met: (ms) => ms < 50 }
		}
	];
}
