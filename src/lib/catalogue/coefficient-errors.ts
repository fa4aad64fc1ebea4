/** Read off a frozen version for display. */
import type { RelationVersionContent } from '../calibration/frozen-content';

/** 1σ of each coefficient: the square root of the covariance diagonal, by axis name. */
export function coefficientErrors(covariance: RelationVersionContent['covariance']): Record<string, number> {
	return Object.fromEntries(covariance.axes.map((axis, i) => [axis, Math.sqrt(covariance.matrix[i][i])]));
}
