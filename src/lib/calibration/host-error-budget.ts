/**
 * The systematic error budget of a host galaxy's distance modulus: every error its Cepheids share,
 * each evaluated once at the host's (weighted) mean log P and [Fe/H] and never averaged down with N.
 *
 *   g = (1, ⟨log P⟩ − p0, ⟨[Fe/H]⟩ − f0)
 *   relation_coefficients = √(gᵀΣg)                 (the relation's statistical covariance)
 *   relation term k        = |g·effect_k|             (effect_k = ∂θ/∂term_k × σ_k, frozen with the version)
 *   foreground_reddening   = R_λ·σ_E(B−V)             (0 for a Wesenheit band: W is reddening-free)
 *   host_metallicity       = |γ|·σ_[Fe/H]·f_assumed   (f_assumed = Σw of stars that assumed it / Σw)
 *   metallicity_scale      = |γ|·σ_conversion·f_assumed
 *   adopted_slope          = |⟨log P⟩ − p0|·σ_b
 *   crowding               = σ_crowding
 * σ_sys² = Σ terms² (standard propagation; a shared error moves every star together, so the weighted
 * mean moves by the same amount).
 */
import { coefficientVariance } from './apply';
import type { RelationSystematicTerm } from './relation-systematics';
import type { Relation } from './types';

/** One line of the budget, in mag of distance modulus (1σ). */
export interface ErrorBudgetTerm {
	id: string;
	label: string;
	value: number;
}

export interface HostBudgetInputs {
	/** The relation's frozen systematics (anchor distance, parallax zero point, fixed slope). */
	relationTerms?: readonly RelationSystematicTerm[];
	/** A host-wide foreground E(B−V) error and R_λ = A_λ/E(B−V) of the band (0 for Wesenheit). */
	foregroundReddening?: { ebvError: number; ratio: number };
	/**
	 * The shared error of the [Fe/H] that stars without their own took (dex), where it came from, and the
	 * error of converting it from another abundance scale (dex, 0 when none).
	 */
	metallicity?: { error: number; conversionError: number; assumed: 'host' | 'pivot' };
	/** σ of an adopted slope (mag/dex). */
	slopeError?: number;
	/** σ of the crowding/blending correction (mag). */
	crowdingError?: number;
	/** Further terms already in mag. */
	fixed?: readonly ErrorBudgetTerm[];
}

export interface HostMeans {
	meanLogPeriod: number;
	meanFeh: number | null;
	/** Share of Σw carried by stars whose [Fe/H] was assumed. */
	assumedMetallicityWeight: number;
}

const fmt = (value: number, digits = 3) => value.toFixed(digits);

export function hostErrorBudget(relation: Relation, inputs: HostBudgetInputs, means: HostMeans): ErrorBudgetTerm[] {
	const gamma = relation.coefficients.metallicityTerm;
	const dLogP = means.meanLogPeriod - relation.pivotLogPeriod;
	const dFeh = gamma !== null && means.meanFeh !== null ? means.meanFeh - relation.pivotFeh : 0;
	const terms: ErrorBudgetTerm[] = [
		{
			id: 'relation_coefficients',
			label: `relation's coefficient covariance at the host's mean log P = ${fmt(means.meanLogPeriod)}${gamma !== null && means.meanFeh !== null ? ` and [Fe/H] = ${fmt(means.meanFeh, 2)}` : ''}`,
			value: Math.sqrt(coefficientVariance(relation, dLogP, dFeh))
		}
	];
	for (const term of inputs.relationTerms ?? []) {
		const { zeroPoint, slope, metallicityTerm } = term.effect;
		terms.push({
			id: term.id,
			label: `relation: ${term.label}`,
			value: Math.abs(zeroPoint + dLogP * slope + (gamma === null ? 0 : dFeh * (metallicityTerm ?? 0)))
		});
	}
	const foreground = inputs.foregroundReddening;
	if (foreground) {
		terms.push({
			id: 'foreground_reddening',
			label:
				foreground.ratio === 0
					? `host foreground E(B−V) ± ${foreground.ebvError}: cancels in a Wesenheit magnitude`
					: `host foreground E(B−V) ± ${foreground.ebvError} × R_λ = ${fmt(foreground.ratio)}`,
			value: foreground.ratio * foreground.ebvError
		});
	}
	const metallicity = inputs.metallicity;
	if (metallicity && gamma !== null && means.assumedMetallicityWeight > 0) {
		const share = means.assumedMetallicityWeight;
		const source = metallicity.assumed === 'host' ? "the host's [Fe/H]" : "the relation's pivot [Fe/H]";
		terms.push({
			id: 'host_metallicity',
			label: `${source} ± ${fmt(metallicity.error)} dex × |γ| for ${fmt(100 * share, 1)}% of the weight`,
			value: Math.abs(gamma) * metallicity.error * share
		});
		if (metallicity.conversionError > 0) {
			terms.push({
				id: 'metallicity_scale',
				label: `abundance-scale conversion ± ${fmt(metallicity.conversionError)} dex × |γ|`,
				value: Math.abs(gamma) * metallicity.conversionError * share
			});
		}
	}
	if (inputs.slopeError !== undefined) {
		terms.push({
			id: 'adopted_slope',
			label: `adopted slope ± ${inputs.slopeError} at Δlog P = ${fmt(dLogP)} from the pivot`,
			value: Math.abs(dLogP) * inputs.slopeError
		});
	}
	if (inputs.crowdingError !== undefined) {
		terms.push({ id: 'crowding', label: 'crowding/blending correction', value: inputs.crowdingError });
	}
	terms.push(...(inputs.fixed ?? []));
	return terms;
}
