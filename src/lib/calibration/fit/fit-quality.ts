import type { CalibrationWarning } from '../types';
import type { WeightedCovarianceScaling } from './types';

/** How well the stated errors describe the scatter of a fit, as a frozen version records it. */
export interface FitQuality {
	reducedChiSquare: number | null;
	degreesOfFreedom: number;
	/** True when the coefficient covariance was multiplied by χ²/dof. */
	covarianceScaled: boolean;
	/** χ²/dof above `reducedChiSquareLimit(dof)`: the stated per-star errors are too small. */
	errorsTooSmall: boolean;
}

/**
 * Largest χ²/dof that errors of the right size still give, 1 + 3·√(2/dof): for Gaussian errors χ²/dof has
 * mean 1 and standard deviation √(2/dof), so a value 3σ above it says the errors are too small (common
 * practice). Null without degrees of freedom.
 */
export function reducedChiSquareLimit(degreesOfFreedom: number): number | null {
	return degreesOfFreedom > 0 ? 1 + 3 * Math.sqrt(2 / degreesOfFreedom) : null;
}

/** The factor a weighted fit's (XᵀWX)⁻¹ is multiplied by under a scaling rule. */
export function weightedCovarianceFactor(scaling: WeightedCovarianceScaling, reducedChiSquare: number | null): number {
	if (scaling === 'absolute' || reducedChiSquare === null) return 1;
	return scaling === 'reduced_chi_square' ? reducedChiSquare : Math.max(1, reducedChiSquare);
}

export function fitQualityOf(
	reducedChiSquare: number | null,
	degreesOfFreedom: number,
	covarianceScaled: boolean
): FitQuality {
	const limit = reducedChiSquareLimit(degreesOfFreedom);
	return {
		reducedChiSquare,
		degreesOfFreedom,
		covarianceScaled,
		errorsTooSmall: reducedChiSquare !== null && limit !== null && reducedChiSquare > limit
	};
}

/** The warning a fit with too-small errors carries, with the numbers behind it; null otherwise. */
export function fitQualityWarning(quality: FitQuality): CalibrationWarning | null {
	if (!quality.errorsTooSmall || quality.reducedChiSquare === null) return null;
	const limit = reducedChiSquareLimit(quality.degreesOfFreedom) as number;
	const factor = Math.sqrt(quality.reducedChiSquare);
	const consequence = quality.covarianceScaled
		? `the coefficient errors were multiplied by √(χ²/dof) = ${factor.toFixed(2)} to match the scatter`
		: `coefficient errors taken from the stated per-star errors alone would be about ${factor.toFixed(1)}× too small`;
	return {
		code: 'errors_too_small',
		message:
			`χ²/dof = ${quality.reducedChiSquare.toFixed(2)} on ${quality.degreesOfFreedom} degrees of freedom exceeds ` +
			`1 + 3·√(2/dof) = ${limit.toFixed(2)}: the stated per-star errors do not explain the scatter; ${consequence}`,
		field: 'reduced_chi_square',
		details: {
			reducedChiSquare: quality.reducedChiSquare,
			degreesOfFreedom: quality.degreesOfFreedom,
			limit,
			covarianceScaled: String(quality.covarianceScaled)
		}
	};
}
