/**
 * Distance modulus and distance, with first-order error propagation.
 *
 * μ = 5·log10(d / 10 pc)  ⇔  d[pc] = 10^(μ/5 + 1); σ_d = d·(ln 10 / 5)·σ_μ and σ_μ = (5 / ln 10)·σ_d / d
 * (standard definition of the distance modulus; linear propagation).
 */
import { LIGHT_YEARS_PER_PARSEC } from './constants';
import type { Measured } from './types';

export type DistanceUnit = 'pc' | 'kpc' | 'Mpc' | 'ly';

const PARSECS_PER_UNIT: Record<DistanceUnit, number> = {
	pc: 1,
	kpc: 1e3,
	Mpc: 1e6,
	ly: 1 / LIGHT_YEARS_PER_PARSEC
};

const LN10_OVER_5 = Math.LN10 / 5;

/** d[pc] = 10^(μ/5 + 1). */
export function distanceModulusToParsecs(mu: number): number {
	return 10 ** (mu / 5 + 1);
}

/** μ = 5·log10(d[pc]) − 5. */
export function parsecsToDistanceModulus(parsecs: number): number {
	return 5 * Math.log10(parsecs) - 5;
}

/** Distance in the given unit from μ. */
export function distanceFromModulus(mu: number, unit: DistanceUnit = 'pc'): number {
	return distanceModulusToParsecs(mu) / PARSECS_PER_UNIT[unit];
}

/** μ from a distance in the given unit. */
export function modulusFromDistance(distance: number, unit: DistanceUnit = 'pc'): number {
	return parsecsToDistanceModulus(distance * PARSECS_PER_UNIT[unit]);
}

/** Convert a distance between units. */
export function convertDistance(distance: number, from: DistanceUnit, to: DistanceUnit): number {
	return (distance * PARSECS_PER_UNIT[from]) / PARSECS_PER_UNIT[to];
}

/** d ± σ_d from μ ± σ_μ, with σ_d = d·(ln 10/5)·σ_μ (first order). */
export function measuredDistanceFromModulus(mu: Measured, unit: DistanceUnit = 'pc'): Measured {
	const value = distanceFromModulus(mu.value, unit);
	return { value, error: value * LN10_OVER_5 * mu.error };
}

/** μ ± σ_μ from d ± σ_d, with σ_μ = (5/ln 10)·σ_d/d (first order). */
export function measuredModulusFromDistance(distance: Measured, unit: DistanceUnit = 'pc'): Measured {
	return {
		value: modulusFromDistance(distance.value, unit),
		error: distance.error / (distance.value * LN10_OVER_5)
	};
}

/** Flux ratio f_near/f_far of the same source seen at distance modulus μ versus 10 pc: 10^(0.4·μ). */
export function fluxRatioFromModulus(mu: number): number {
	return 10 ** (0.4 * mu);
}

/** The median and the 16th/84th percentiles of a distance whose modulus is Gaussian. */
export interface DistanceInterval {
	median: number;
	p16: number;
	p84: number;
}

/**
 * For Gaussian μ ~ N(μ0, σ), d = 10^(μ/5+1) is monotonic in μ, so its quantiles are the transforms of
 * μ's: median 10^(μ0/5+1), 16th/84th percentiles 10^((μ0 ∓ σ)/5+1) (to the 1σ points' 15.87%/84.13%).
 * The interval is asymmetric, unlike the first-order d ± σ_d of `measuredDistanceFromModulus`.
 */
export function distanceIntervalFromModulus(mu: number, sigma: number, unit: DistanceUnit = 'pc'): DistanceInterval {
	return {
		median: distanceFromModulus(mu, unit),
		p16: distanceFromModulus(mu - sigma, unit),
		p84: distanceFromModulus(mu + sigma, unit)
	};
}
