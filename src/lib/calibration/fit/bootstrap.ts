import type { CoefficientAxis } from '../types';
import { createIndexDrawer, RESAMPLING_GENERATOR } from './random';
import type { AxisInterval, BootstrapOptions, BootstrapSummary } from './types';

export const DEFAULT_BOOTSTRAP_LEVEL = 0.68;

/**
 * Quantile of sorted values with linear interpolation between order statistics,
 * Q(q) = x₍ₖ₎ + (h − k)(x₍ₖ₊₁₎ − x₍ₖ₎), h = (n − 1)q (Hyndman & Fan 1996, Am. Stat. 50, 361, type 7).
 */
export function sortedQuantile(sorted: ArrayLike<number>, q: number): number {
	const h = (sorted.length - 1) * q;
	const k = Math.floor(h);
	const next = Math.min(k + 1, sorted.length - 1);
	return sorted[k] + (h - k) * (sorted[next] - sorted[k]);
}

/**
 * Nonparametric bootstrap over stars (Efron & Tibshirani 1993, An Introduction to the Bootstrap,
 * ch. 6 and 13): draw `kept.length` stars with replacement from the kept set, refit, and summarise the
 * refitted parameters by percentile intervals and their sample covariance. `refit` returns the free
 * coefficients in `axes` order (plus σ_int last when `withScatter`), or null for a degenerate draw.
 */
export function bootstrapParameters(
	kept: readonly number[],
	axes: CoefficientAxis[],
	withScatter: boolean,
	options: BootstrapOptions,
	refit: (indices: Int32Array) => number[] | null
): Omit<BootstrapSummary, 'reclipped' | 'meanRejectedPerResample'> {
	const level = options.level ?? DEFAULT_BOOTSTRAP_LEVEL;
	const drawer = createIndexDrawer(options.seed);
	const parameterCount = axes.length + (withScatter ? 1 : 0);
	const samples = Array.from({ length: parameterCount }, () => new Float64Array(options.resamples));
	const indices = new Int32Array(kept.length);
	let accepted = 0;
	for (let r = 0; r < options.resamples; r++) {
		for (let k = 0; k < kept.length; k++) indices[k] = kept[drawer.next(kept.length)];
		const parameters = refit(indices);
		if (!parameters) continue;
		for (let j = 0; j < parameterCount; j++) samples[j][accepted] = parameters[j];
		accepted++;
	}
	const used = samples.map((column) => column.subarray(0, accepted));

	const means = used.map((column) => column.reduce((sum, value) => sum + value, 0) / accepted);
	const matrix = axes.map((_, a) =>
		axes.map((__, b) => {
			let sum = 0;
			for (let r = 0; r < accepted; r++) sum += (used[a][r] - means[a]) * (used[b][r] - means[b]);
			return accepted > 1 ? sum / (accepted - 1) : NaN;
		})
	);

	const tail = (1 - level) / 2;
	const names: AxisInterval['axis'][] = [...axes, ...(withScatter ? (['intrinsic_scatter'] as const) : [])];
	const intervals = names.map((axis, j) => {
		const sorted = Float64Array.from(used[j]).sort();
		return { axis, lower: sortedQuantile(sorted, tail), upper: sortedQuantile(sorted, 1 - tail) };
	});

	return {
		generator: RESAMPLING_GENERATOR,
		seed: options.seed,
		resamples: options.resamples,
		level,
		failedResamples: options.resamples - accepted,
		intervals,
		covariance: { axes: [...axes], matrix }
	};
}
