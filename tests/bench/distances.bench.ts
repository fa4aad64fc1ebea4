/**
 * The distances endpoint's work for 100 000 stars, without the network: parse the JSON body, check
 * every star into typed columns, apply the relation, σ-clip and combine, and write the JSON response.
 * The baseline, timed in the same run, is JSON.parse of the same request plus JSON.stringify of the
 * parsed stars — the least any JSON endpoint must do with this payload. Target: at most 3× the baseline.
 *
 * Run alone: `node --import tsx tests/bench/distances.bench.ts`; `npm run bench` includes it.
 */
import { pathToFileURL } from 'node:url';
import { hostDistanceBatch } from '../../src/lib/calibration/host-batch';
import {
	readDistanceEnvelope,
	readStarColumns,
	toDistanceResponse,
	type DistanceComputation
} from '../../src/lib/server/api/distances';
import type { BenchCase } from './calibration.bench';
import { INVENTED_V_BAND } from '../fixtures/invented-v-band';

const relation = INVENTED_V_BAND;

function requestBody(n: number): string {
	const stars = Array.from({ length: n }, (_, i) => ({
		id: `invented-${i}`,
		period_days: 2.5 + ((i * 7919) % 600) / 10,
		mean_mag: 25 + ((i * 104729) % 13) * 0.03,
		mean_mag_err: 0.03 + (i % 3) * 0.01,
		ebv: 0.05 + (i % 4) * 0.03,
		ebv_err: 0.01,
		feh: -0.5 + (i % 9) * 0.1,
		feh_err: 0.05
	}));
	return JSON.stringify({ relation: 'invented-v@1', stars });
}

/** Everything POST /api/v1/distances does after the relation lookup. */
function endpointWork(body: string): string {
	const inputs = readDistanceEnvelope(JSON.parse(body));
	const columns = readStarColumns(inputs.stars);
	const computation: DistanceComputation = {
		relation: {
			ref: 'invented-v@1',
			digest: `sha256:${'0'.repeat(64)}`,
			status: 'current',
			band: 'V',
			population: 'classical_fundamental',
			magnitude_system: 'Vega',
			validity: { log_period_min: 0.4, log_period_max: 1.8, feh_min: -0.6, feh_max: 0.4 },
			coefficients: { zero_point: -3.944, slope: -2.67, metallicity_term: -0.2 },
			pivot_log_period: 1,
			pivot_feh: 0,
			wesenheit_ratio: null,
			engine_version: '1.0.0',
			systematics_recorded: false
		},
		settings: {
			extinction_law: 'ccm89',
			r_v: 3.1,
			clip_sigma: 3,
			foreground_ebv_err: null,
			host_metallicity: null,
			adopted_slope_err: null,
			crowding_correction: null
		},
		ids: columns.ids,
		batch: hostDistanceBatch(relation, columns),
		warnings: []
	};
	return JSON.stringify(toDistanceResponse(computation));
}

export function buildDistanceCases(): BenchCase[] {
	const n = 100_000;
	const body = requestBody(n);
	return [
		{
			name: `distances endpoint work, ${n} stars (${(body.length / 1e6).toFixed(1)} MB JSON)`,
			items: n,
			itemLabel: 'stars',
			run: () => endpointWork(body),
			baseline: () => JSON.stringify(JSON.parse(body).stars),
			baselineLabel: 'JSON.parse + JSON.stringify of the same payload',
			repeats: 5
		}
	];
}

function median(values: number[]): number {
	const sorted = [...values].sort((a, b) => a - b);
	return sorted[sorted.length >> 1];
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

/** Times each case and its baseline alternately, so machine load affects both alike. */
export function runDistanceBenchmarks() {
	return buildDistanceCases().map((bench) => {
		const ms = timeMs(bench.run, bench.repeats);
		const baselineMs = timeMs(bench.baseline, bench.repeats);
		const ratio = ms / baselineMs;
		return {
			benchmark: bench.name,
			'median ms': ms.toFixed(0),
			throughput: `${(((bench.items / ms) * 1000) / 1e3).toFixed(0)} k stars/s`,
			baseline: bench.baselineLabel,
			'baseline ms': baselineMs.toFixed(0),
			ratio: `${ratio.toFixed(2)}×`,
			target: `≤ 3× baseline: ${ratio <= 3 ? 'met' : 'MISSED'}`,
			met: ratio <= 3
		};
	});
}

export function printDistanceBenchmarks(rows: ReturnType<typeof runDistanceBenchmarks>): void {
	console.log(
		'Candlebook distances endpoint benchmark (no network; the HTTP timing is in tests/browser/worksheet.test.ts)'
	);
	console.table(rows.map(({ met: _met, ...row }) => row));
}

if (import.meta.url === pathToFileURL(process.argv[1]).href) {
	const rows = runDistanceBenchmarks();
	printDistanceBenchmarks(rows);
	if (rows.some((row) => row.met === false)) process.exitCode = 1;
}
