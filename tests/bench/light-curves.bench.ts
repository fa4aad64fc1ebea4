/**
 * Light-curve benchmarks: the fast generalised Lomb–Scargle periodogram against astropy's fast method
 * (LombScargle(..., fit_mean=True, center_data=True, normalization='standard').power(f, method='fast'))
 * on the same invented data and the same frequency grid, both timed in this run (astropy inside its own
 * Python process, so interpreter start-up is not counted; rounds alternate between the two). Accuracy is the largest power difference from
 * the exact periodogram on the same grid; the target is ratio ≤ 1.0 with accuracy no worse than astropy's.
 *
 * Run alone: `node --import tsx tests/bench/light-curves.bench.ts`; or call runLightCurveBenchmarks().
 */
import { pathToFileURL } from 'node:url';
import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { analyseLightCurve } from '../../src/lib/calibration/light-curves/light-curve-analysis';
import { fastPeriodogram } from '../../src/lib/calibration/light-curves/fast-periodogram';
import { automaticFrequencyGrid, type FrequencyGrid } from '../../src/lib/calibration/light-curves/frequency-grid';
import { exactPeriodogram } from '../../src/lib/calibration/light-curves/periodogram';
import {
	prepareSeries,
	type LightCurvePoint,
	type LightCurveSeries
} from '../../src/lib/calibration/light-curves/series';
import { astropyVersion, runPython } from '../support/astropy';

export interface LightCurveBenchRow {
	benchmark: string;
	'median ms': string;
	'astropy fast ms': string;
	ratio: string;
	'max |Δp| ours': string;
	'max |Δp| astropy': string;
	target: string;
	met: boolean | null;
}

/** Invented Cepheid-like star: skewed four-harmonic curve, seasonal gaps, 0.01–0.03 mag errors. */
function inventedStar(seed: number, nPoints: number, baselineDays: number): LightCurveSeries {
	const rng = xoroshiro128plus(seed);
	const uniform = () => uniformFloat64(rng);
	const gauss = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform());
	const period = 10 ** (0.1 + 1.5 * uniform());
	const amplitude = 0.15 + 0.3 * uniform();
	const points: LightCurvePoint[] = [];
	while (points.length < nPoints) {
		const t = baselineDays * uniform();
		if ((t / 365.25) % 1 > 0.7) continue;
		const phase = (2 * Math.PI * t) / period;
		const err = 0.01 + 0.02 * uniform();
		const mag =
			15 +
			amplitude *
				(Math.sin(phase) +
					0.4 * Math.sin(2 * phase + 0.8) +
					0.2 * Math.sin(3 * phase + 1.9) +
					0.1 * Math.sin(4 * phase + 3));
		points.push([t, mag + err * gauss(), err]);
	}
	points.sort((a, b) => a[0] - b[0]);
	return { id: `bench-${seed}`, timeReference: 'HJD', timeOffsetDays: 2450000, points };
}

function median(values: number[]): number {
	const sorted = [...values].sort((a, b) => a - b);
	const mid = sorted.length >> 1;
	return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

function timeMs(fn: () => unknown, repeats: number): number {
	fn();
	const samples: number[] = [];
	for (let i = 0; i < repeats; i++) {
		const start = performance.now();
		fn();
		samples.push(performance.now() - start);
	}
	return median(samples);
}

function maxDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
	let worst = 0;
	for (let k = 0; k < a.length; k++) worst = Math.max(worst, Math.abs(a[k] - b[k]));
	return worst;
}

const ASTROPY_SCRIPT = `import time
import numpy as np
from astropy.timeseries import LombScargle
def grid(g):
    return (g['firstIndex'] + np.arange(g['count'])) * g['step']
prepared = [(np.array(s['points']), grid(s['grid'])) for s in data['stars']]
def run():
    return [LombScargle(p[:, 0], p[:, 1], p[:, 2], fit_mean=True, center_data=True, normalization='standard').power(f, method='fast') for p, f in prepared]
powers = run()
start = time.perf_counter()
run()
print(json.dumps({'ms': (time.perf_counter() - start) * 1000, 'powers': [powers[i].tolist() for i in data['keep']]}))`;

interface Workload {
	name: string;
	stars: LightCurveSeries[];
	grids: FrequencyGrid[];
	/** Stars whose powers are compared with the exact periodogram. */
	checked: number[];
	repeats: number;
}

function workloads(): Workload[] {
	const single = inventedStar(1, 1000, 2000);
	const singleGrid: FrequencyGrid = { step: 1 / (5 * 2000), firstIndex: 1, count: 100_000 };
	const batch = Array.from({ length: 500 }, (_, i) => inventedStar(100 + i, 150 + (i % 5) * 50, 1500 + 10 * (i % 100)));
	const batchGrids = batch.map((star) => {
		const times = star.points.map((point) => point[0]);
		return automaticFrequencyGrid({ baselineDays: Math.max(...times) - Math.min(...times), minPeriodDays: 0.5 });
	});
	return [
		{
			name: '1 000 points × 100 000 frequencies',
			stars: [single],
			grids: [singleGrid],
			checked: [0],
			repeats: 7
		},
		{
			name: '500 stars (150–350 points, automatic grids)',
			stars: batch,
			grids: batchGrids,
			checked: [0, 1, 2],
			repeats: 3
		}
	];
}

/**
 * Times ours and astropy in alternating rounds (each after its own warm-up), so a change in machine load
 * during the run hits both; reports the medians.
 */
function benchWorkload(workload: Workload, withAstropy: boolean): LightCurveBenchRow {
	const prepared = workload.stars.map((star) => prepareSeries(star));
	const runOurs = () => prepared.map((series, i) => fastPeriodogram(series, workload.grids[i]).power);
	const ours = runOurs();
	const exact = workload.checked.map((i) => exactPeriodogram(prepared[i], workload.grids[i]).power);
	const ourError = Math.max(...workload.checked.map((i, j) => maxDifference(ours[i], exact[j])));
	const stars = prepared.map((series, i) => ({
		// Same times as ours (counted from the first point); a shift does not change the periodogram.
		points: Array.from(series.t, (t, k) => [t, series.mag[k], series.err[k]]),
		grid: workload.grids[i]
	}));
	const oursMs: number[] = [];
	const astropyMs: number[] = [];
	let astropyPowers: number[][] = [];
	for (let round = 0; round < workload.repeats; round++) {
		oursMs.push(timeMs(runOurs, 1));
		if (withAstropy) {
			const reference = runPython<{ ms: number; powers: number[][] }>(ASTROPY_SCRIPT, {
				stars,
				keep: workload.checked
			});
			astropyMs.push(reference.ms);
			astropyPowers = reference.powers;
		}
	}
	const ms = median(oursMs);
	if (!withAstropy) {
		return {
			benchmark: workload.name,
			'median ms': ms.toFixed(1),
			'astropy fast ms': 'astropy absent',
			ratio: '—',
			'max |Δp| ours': ourError.toExponential(1),
			'max |Δp| astropy': '—',
			target: 'ratio ≤ 1.0: not measured',
			met: null
		};
	}
	const baselineMs = median(astropyMs);
	const astropyError = Math.max(...workload.checked.map((_, j) => maxDifference(astropyPowers[j], exact[j])));
	const ratio = ms / baselineMs;
	const met = ratio <= 1 && ourError <= astropyError;
	return {
		benchmark: workload.name,
		'median ms': ms.toFixed(1),
		'astropy fast ms': baselineMs.toFixed(1),
		ratio: `${ratio.toFixed(2)}×`,
		'max |Δp| ours': ourError.toExponential(1),
		'max |Δp| astropy': astropyError.toExponential(1),
		target: `ratio ≤ 1.0 at ≤ astropy's error: ${met ? 'met' : 'MISSED'}`,
		met
	};
}

/** Whole analysis (periodogram, candidates, Fourier order, refinement, warnings) per star; no baseline. */
function analysisRow(): LightCurveBenchRow {
	const stars = Array.from({ length: 20 }, (_, i) => inventedStar(900 + i, 300, 2000));
	const ms = timeMs(() => stars.map((star) => analyseLightCurve(star)), 1);
	return {
		benchmark: 'full analysis, 20 stars × 300 points',
		'median ms': ms.toFixed(1),
		'astropy fast ms': '—',
		ratio: `${(ms / stars.length).toFixed(1)} ms/star`,
		'max |Δp| ours': '—',
		'max |Δp| astropy': '—',
		target: '—',
		met: null
	};
}

export function runLightCurveBenchmarks(): LightCurveBenchRow[] {
	const withAstropy = astropyVersion() !== null;
	return [...workloads().map((workload) => benchWorkload(workload, withAstropy)), analysisRow()];
}

export function printLightCurveBenchmarks(rows: LightCurveBenchRow[]): void {
	console.log(
		`Candlebook light-curve benchmarks — node ${process.version}, astropy ${astropyVersion() ?? 'absent'}, ${process.platform}/${process.arch}`
	);
	console.table(rows.map(({ met: _met, ...row }) => row));
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
	const rows = runLightCurveBenchmarks();
	printLightCurveBenchmarks(rows);
	if (rows.some((row) => row.met === false)) process.exitCode = 1;
}
