/**
 * `npm run bench`: times the calibration benchmarks and prints a table (median of repeated runs after
 * warm-up, with the baseline timed in the same process), then the light-curve and pinned-version fetch
 * benchmarks. Sets a non-zero exit code when a target is missed.
 */
import { buildCases } from './calibration.bench';
import { printDistanceBenchmarks, runDistanceBenchmarks } from './distances.bench';
import { printLightCurveBenchmarks, runLightCurveBenchmarks } from './light-curves.bench';
import { printPinnedFetchBenchmarks, runPinnedFetchBenchmarks } from './pinned-fetch.bench';

function median(values: number[]): number {
	const sorted = [...values].sort((a, b) => a - b);
	const mid = sorted.length >> 1;
	return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

let sink: unknown;
function time(fn: () => unknown, repeats: number): number {
	for (let i = 0; i < 2; i++) sink = fn();
	const samples: number[] = [];
	for (let i = 0; i < repeats; i++) {
		const start = performance.now();
		sink = fn();
		samples.push(performance.now() - start);
	}
	return median(samples);
}

function formatRate(perSecond: number): string {
	if (perSecond >= 1e6) return `${(perSecond / 1e6).toFixed(2)} M/s`;
	if (perSecond >= 1e3) return `${(perSecond / 1e3).toFixed(1)} k/s`;
	return `${perSecond.toFixed(0)} /s`;
}

const rows = buildCases().map((bench) => {
	const ms = time(bench.run, bench.repeats);
	const baselineMs = time(bench.baseline, bench.repeats);
	const met = bench.target ? bench.target.met(ms) : null;
	return {
		benchmark: bench.name,
		'median ms': ms.toFixed(2),
		throughput: `${formatRate(bench.items / (ms / 1000))} ${bench.itemLabel}`,
		baseline: bench.baselineLabel,
		'baseline ms': baselineMs.toFixed(3),
		ratio: `${(ms / baselineMs).toFixed(1)}×`,
		target: bench.target ? `${bench.target.description}: ${met ? 'met' : 'MISSED'}` : '—',
		met
	};
});

console.log(`Candlebook calibration benchmarks — node ${process.version}, ${process.platform}/${process.arch}`);
console.table(rows.map(({ met: _met, ...row }) => row));
void sink;
if (rows.some((row) => row.met === false)) process.exitCode = 1;

const lightCurveRows = runLightCurveBenchmarks();
printLightCurveBenchmarks(lightCurveRows);
if (lightCurveRows.some((row) => row.met === false)) process.exitCode = 1;

const pinnedFetch = await runPinnedFetchBenchmarks();
printPinnedFetchBenchmarks(pinnedFetch);
if (pinnedFetch.rows.some((row) => row.met === false)) process.exitCode = 1;

const distanceRows = runDistanceBenchmarks();
printDistanceBenchmarks(distanceRows);
if (distanceRows.some((row) => row.met === false)) process.exitCode = 1;
