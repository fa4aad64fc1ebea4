import type { ClippingOptions, RejectedStar } from './types';

export interface ClippingOutcome<State> {
	state: State;
	/** Indices of the stars kept, ascending. */
	kept: number[];
	rejected: RejectedStar[];
	/** Rounds in which residuals were tested. */
	rounds: number;
}

/**
 * Iterative σ-clipping: fit the kept stars, reject every kept star with |standardized residual| > σ,
 * refit, and repeat until a round rejects nobody or `maxIterations` rounds have run. A round that
 * would leave fewer than `minimumKept` stars rejects nobody and ends the clipping.
 */
export function clipIteratively<State>(
	stars: readonly string[],
	options: ClippingOptions | null,
	minimumKept: number,
	fitOn: (kept: number[]) => State,
	standardizedResidual: (state: State, index: number) => number
): ClippingOutcome<State> {
	let kept = stars.map((_, i) => i);
	let state = fitOn(kept);
	const rejected: RejectedStar[] = [];
	let rounds = 0;
	if (!options) return { state, kept, rejected, rounds };

	for (let round = 1; round <= options.maxIterations; round++) {
		rounds = round;
		const outliers = kept
			.map((index) => ({ index, z: standardizedResidual(state, index) }))
			.filter(({ z }) => Math.abs(z) > options.sigma);
		if (outliers.length === 0 || kept.length - outliers.length < minimumKept) break;
		for (const { index, z } of outliers) {
			rejected.push({
				star: stars[index],
				standardizedResidual: z,
				iteration: round,
				reason: `|r|/σ = ${Math.abs(z).toFixed(2)} > ${options.sigma.toFixed(1)} in round ${round}`
			});
		}
		const outlierSet = new Set(outliers.map(({ index }) => index));
		kept = kept.filter((index) => !outlierSet.has(index));
		state = fitOn(kept);
	}
	return { state, kept, rejected, rounds };
}
