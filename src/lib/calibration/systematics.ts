/**
 * Errors shared by every calibrator of a relation (the anchor's distance, the adopted parallax zero point,
 * an adopted slope). They do not average down with the number of stars, so a frozen version keeps them
 * apart from its statistical covariance, each with its effect on the coefficients, and a consumer adds
 * Σ effect·effectᵀ to that covariance exactly once.
 */
import type { CoefficientAxis, Covariance } from './types';

export const CALIBRATION_SYSTEMATIC_IDS = ['anchor_distance', 'parallax_zero_point', 'fixed_slope'] as const;
export type CalibrationSystematicId = (typeof CALIBRATION_SYSTEMATIC_IDS)[number];

/** How each coefficient moves for a +1σ change of a shared term: (∂θ/∂term)·σ_term. */
export interface CoefficientEffect {
	zeroPoint: number;
	slope: number;
	metallicityTerm: number | null;
}

export interface CalibrationSystematic {
	id: CalibrationSystematicId;
	/** e.g. "LMC distance modulus 18.477 ± 0.026 mag". */
	label: string;
	/** The adopted value: μ of the anchor (mag), the zero point (mas), the slope (mag/dex). */
	value: number | null;
	/** Its 1σ error, in the same unit. */
	error: number;
	effect: CoefficientEffect;
}

/** The frozen (snake_case) form of one term, as `systematics.terms` of a version records it. */
export interface FrozenSystematicTerm {
	id: CalibrationSystematicId;
	label: string;
	value: number | null;
	error: number;
	effect: { zero_point: number; slope: number; metallicity_term: number | null };
}

/** What `systematicCovariance` needs of a version's content: engine 1.x versions have no `systematics`. */
export interface ContentWithSystematics {
	form: string;
	systematics?: { terms: readonly FrozenSystematicTerm[] } | null;
}

export function frozenSystematicTerm(term: CalibrationSystematic): FrozenSystematicTerm {
	return {
		id: term.id,
		label: term.label,
		value: term.value,
		error: term.error,
		effect: {
			zero_point: term.effect.zeroPoint,
			slope: term.effect.slope,
			metallicity_term: term.effect.metallicityTerm
		}
	};
}

/**
 * Σ over the frozen terms of eₖ·eₖᵀ, eₖ = (Δa, Δb[, Δγ]) for a +1σ change of term k, on the axes
 * zero_point, slope (and metallicity_term for a relation with one): the covariance the shared errors put on
 * the coefficients, to add once to the statistical `covariance` (which never contains them). A term of an
 * axis the statistical covariance lacks (a fixed slope) is carried all the same. Null when the version
 * records no systematics (engine 1.x: "systematics not recorded").
 */
export function systematicCovariance(content: ContentWithSystematics): Covariance | null {
	if (!content.systematics) return null;
	const withGamma = content.form === 'period_luminosity_metallicity';
	const axes: CoefficientAxis[] = withGamma ? ['zero_point', 'slope', 'metallicity_term'] : ['zero_point', 'slope'];
	const matrix = axes.map(() => axes.map(() => 0));
	for (const term of content.systematics.terms) {
		const effect = [term.effect.zero_point, term.effect.slope];
		if (withGamma) effect.push(term.effect.metallicity_term ?? 0);
		effect.forEach((a, i) => effect.forEach((b, j) => (matrix[i][j] += a * b)));
	}
	return { axes, matrix };
}
