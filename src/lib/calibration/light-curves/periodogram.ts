/**
 * Generalised Lomb–Scargle periodogram: a floating mean and errors as weights
 * (Zechmeister & Kürster 2009, A&A 496, 577, eq. 4–20). For ω = 2πf, with Σw_i = 1,
 *
 *   Y = Σw y, C = Σw cos ωt, S = Σw sin ωt,
 *   YY = Σw y² − Y²,  YC = Σw y cos ωt − Y·C,  YS = Σw y sin ωt − Y·S,
 *   CC = Σw cos² ωt − C²,  SS = Σw sin² ωt − S²,  CS = Σw cos ωt sin ωt − C·S,  D = CC·SS − CS²,
 *   p(ω) = (SS·YC² + CC·YS² − 2·CS·YC·YS) / (YY·D),
 *
 * which is 1 − χ²(a + b cos ωt + c sin ωt)/χ²(constant): 0 ≤ p ≤ 1 ("standard" normalisation).
 */
import type { PreparedSeries } from './series';
import type { FrequencyGrid } from './frequency-grid';

export type WeightedSamples = Pick<PreparedSeries, 't' | 'mag' | 'weight'>;

export interface Periodogram {
	grid: FrequencyGrid;
	power: Float64Array;
	method: 'exact' | 'fast';
}

/** The six weighted sums at one frequency, y already centred on its weighted mean (so Y = 0). */
export interface TrigSums {
	c: number;
	s: number;
	yc: number;
	ys: number;
	cc: number;
	cs: number;
}

/** p(ω) from the sums (ZK09 eq. 20); SS follows from Σw sin² = 1 − Σw cos². */
export function powerFromSums(sums: TrigSums, yy: number): number {
	const { c, s, yc, ys } = sums;
	const cc = sums.cc - c * c;
	const ss = 1 - sums.cc - s * s;
	const cs = sums.cs - c * s;
	const d = cc * ss - cs * cs;
	if (!(d > 0) || !(yy > 0)) return 0;
	return (ss * yc * yc + cc * ys * ys - 2 * cs * yc * ys) / (yy * d);
}

/** y − Σw y and YY = Σw (y − Y)². */
export function centredMagnitudes(series: WeightedSamples): { y: Float64Array; yy: number } {
	const n = series.t.length;
	let mean = 0;
	for (let i = 0; i < n; i++) mean += series.weight[i] * series.mag[i];
	const y = new Float64Array(n);
	let yy = 0;
	for (let i = 0; i < n; i++) {
		y[i] = series.mag[i] - mean;
		yy += series.weight[i] * y[i] * y[i];
	}
	return { y, yy };
}

/** Exact power at any frequency (d⁻¹). */
export function powerAt(series: WeightedSamples, frequency: number): number {
	const { y, yy } = centredMagnitudes(series);
	return powerAtCentred(series, y, yy, frequency);
}

function powerAtCentred(series: WeightedSamples, y: Float64Array, yy: number, frequency: number): number {
	const omega = 2 * Math.PI * frequency;
	const sums: TrigSums = { c: 0, s: 0, yc: 0, ys: 0, cc: 0, cs: 0 };
	for (let i = 0; i < y.length; i++) {
		const w = series.weight[i];
		const cos = Math.cos(omega * series.t[i]);
		const sin = Math.sin(omega * series.t[i]);
		sums.c += w * cos;
		sums.s += w * sin;
		sums.yc += w * y[i] * cos;
		sums.ys += w * y[i] * sin;
		sums.cc += w * cos * cos;
		sums.cs += w * cos * sin;
	}
	return powerFromSums(sums, yy);
}

/** Exact powers at arbitrary frequencies, O(N·M) trigonometric calls. */
export function powersAt(series: WeightedSamples, frequencies: ArrayLike<number>): Float64Array {
	const { y, yy } = centredMagnitudes(series);
	const power = new Float64Array(frequencies.length);
	for (let k = 0; k < frequencies.length; k++) power[k] = powerAtCentred(series, y, yy, frequencies[k]);
	return power;
}

/** Rotations between exact re-evaluations of cos/sin; keeps the recurrence's drift below ~1e-13. */
const RESYNC_INTERVAL = 512;

/**
 * Exact periodogram on an even grid, O(N·M). cos/sin of ω_k·t_i advance by one rotation through
 * δω·t_i per step (angle addition), re-evaluated exactly every RESYNC_INTERVAL steps.
 */
export function exactPeriodogram(series: WeightedSamples, grid: FrequencyGrid): Periodogram {
	const n = series.t.length;
	const { y, yy } = centredMagnitudes(series);
	const { t, weight } = series;
	const wy = new Float64Array(n);
	for (let i = 0; i < n; i++) wy[i] = weight[i] * y[i];
	const cos = new Float64Array(n);
	const sin = new Float64Array(n);
	const stepCos = new Float64Array(n);
	const stepSin = new Float64Array(n);
	const deltaOmega = 2 * Math.PI * grid.step;
	for (let i = 0; i < n; i++) {
		stepCos[i] = Math.cos(deltaOmega * t[i]);
		stepSin[i] = Math.sin(deltaOmega * t[i]);
	}
	const power = new Float64Array(grid.count);
	const sums: TrigSums = { c: 0, s: 0, yc: 0, ys: 0, cc: 0, cs: 0 };
	for (let k = 0; k < grid.count; k++) {
		if (k % RESYNC_INTERVAL === 0) {
			const omega = 2 * Math.PI * (grid.firstIndex + k) * grid.step;
			for (let i = 0; i < n; i++) {
				cos[i] = Math.cos(omega * t[i]);
				sin[i] = Math.sin(omega * t[i]);
			}
		} else {
			for (let i = 0; i < n; i++) {
				const c = cos[i];
				cos[i] = c * stepCos[i] - sin[i] * stepSin[i];
				sin[i] = sin[i] * stepCos[i] + c * stepSin[i];
			}
		}
		let c = 0;
		let s = 0;
		let yc = 0;
		let ys = 0;
		let cc = 0;
		let cs = 0;
		for (let i = 0; i < n; i++) {
			const w = weight[i];
			const ci = cos[i];
			const si = sin[i];
			c += w * ci;
			s += w * si;
			yc += wy[i] * ci;
			ys += wy[i] * si;
			cc += w * ci * ci;
			cs += w * ci * si;
		}
		sums.c = c;
		sums.s = s;
		sums.yc = yc;
		sums.ys = ys;
		sums.cc = cc;
		sums.cs = cs;
		power[k] = powerFromSums(sums, yy);
	}
	return { grid, power, method: 'exact' };
}
