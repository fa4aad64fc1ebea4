/**
 * The shared systematics of a refit and their effect on the coefficients: for a +1σ change of each shared
 * term, how far each coefficient moves. Linear fits are refitted on the stars the fit used with the term
 * moved by its error (the fits are linear in the magnitudes, so this is (∂θ/∂term)·σ to rounding for a
 * shared distance and a fixed slope, and a secant through +1σ for the parallax zero point, which enters
 * through log ϖ); a parallax-space fit gives ∂θ/∂ZP from its Jacobian.
 */
import type { CalibratorRow } from './calibrators';
import { fitLinearRelation } from './fit/index';
import type { FittedRefit, RefitSpec } from './refit';
import { prepare } from './refit';
import type { CalibrationSystematic, CoefficientEffect } from './systematics';
import { CalibrationInputError, type CalibrationWarning, type Coefficients } from './types';

export interface SystematicsContext {
	rows: readonly CalibratorRow[];
	spec: RefitSpec;
	fitted: FittedRefit;
}

const ZERO_EFFECT = (withGamma: boolean): CoefficientEffect => ({
	zeroPoint: 0,
	slope: 0,
	metallicityTerm: withGamma ? 0 : null
});

/** The coefficients of a linear refit of these rows, without clipping or bootstrap. */
function linearCoefficients(rows: readonly CalibratorRow[], spec: RefitSpec): Coefficients {
	const prepared = prepare(rows, spec);
	return fitLinearRelation(prepared.points, {
		method: spec.method === 'parallax_space' ? 'wls' : spec.method,
		pivotLogPeriod: spec.pivotLogPeriod,
		pivotFeh: spec.pivotFeh,
		metallicityTerm: spec.form === 'period_luminosity_metallicity',
		fixedSlope: spec.fixedSlope,
		fixedZeroPoint: spec.fixedZeroPoint,
		weightedCovariance: spec.weightedCovariance
	}).coefficients;
}

function difference(moved: Coefficients, nominal: Coefficients, withGamma: boolean): CoefficientEffect {
	return {
		zeroPoint: moved.zeroPoint - nominal.zeroPoint,
		slope: moved.slope - nominal.slope,
		metallicityTerm: withGamma ? (moved.metallicityTerm ?? 0) - (nominal.metallicityTerm ?? 0) : null
	};
}

export function calibrationSystematics({ rows, spec, fitted }: SystematicsContext): {
	terms: CalibrationSystematic[];
	warnings: CalibrationWarning[];
} {
	const withGamma = spec.form === 'period_luminosity_metallicity';
	const used = new Set(fitted.residuals.filter((residual) => residual.used).map((residual) => residual.star));
	const usedRows = rows.filter((row) => used.has(row.star));
	const terms: CalibrationSystematic[] = [];
	const warnings: CalibrationWarning[] = [];
	let nominal: Coefficients | null = null;
	const effectOf = (label: string, error: number, moved: () => Coefficients): CoefficientEffect | null => {
		if (error === 0) return ZERO_EFFECT(withGamma);
		try {
			nominal ??= linearCoefficients(usedRows, spec);
			return difference(moved(), nominal, withGamma);
		} catch (error) {
			if (!(error instanceof CalibrationInputError)) throw error;
			warnings.push({
				code: 'systematic_not_evaluated',
				message: `the effect of ${label} on the coefficients could not be worked out: ${error.message}`,
				field: 'systematics'
			});
			return null;
		}
	};

	for (const shared of fitted.systematics) {
		if (shared.kind === 'host_distance') {
			const members = new Set(shared.stars.filter((star) => used.has(star)));
			if (members.size === 0) continue;
			const label = `${shared.host} distance modulus ${shared.value} ± ${shared.error} mag`;
			const effect = effectOf(label, shared.error, () =>
				linearCoefficients(
					usedRows.map((row) =>
						members.has(row.star) ? { ...row, muHost: (row.muHost as number) + shared.error } : row
					),
					spec
				)
			);
			if (effect) terms.push({ id: 'anchor_distance', label, value: shared.value, error: shared.error, effect });
		} else if (spec.parallaxOffset?.mode === 'given') {
			// A fitted offset is a free parameter: its error is in the statistical covariance already.
			const { value, error } = spec.parallaxOffset;
			const label = `parallax zero point ${value} ± ${error} mas (ϖ_true = ϖ_obs − ZP)`;
			const effect =
				spec.method === 'parallax_space'
					? sensitivityEffect(fitted, error, withGamma)
					: effectOf(label, error, () =>
							linearCoefficients(usedRows, { ...spec, parallaxOffset: { mode: 'given', value: value + error, error } })
						);
			if (effect) terms.push({ id: 'parallax_zero_point', label, value, error, effect });
		}
	}

	const slopeError = spec.fixedSlopeError ?? null;
	if (spec.fixedSlope !== null && slopeError !== null) {
		const fixedSlope = spec.fixedSlope;
		const label = `adopted slope ${fixedSlope} ± ${slopeError} mag/dex`;
		const effect = effectOf(label, slopeError, () =>
			linearCoefficients(usedRows, { ...spec, fixedSlope: fixedSlope + slopeError })
		);
		if (effect) terms.push({ id: 'fixed_slope', label, value: fixedSlope, error: slopeError, effect });
	}
	return { terms, warnings };
}

/** (∂θ/∂ZP)·σ_ZP from a parallax-space fit's Jacobian. */
function sensitivityEffect(fitted: FittedRefit, error: number, withGamma: boolean): CoefficientEffect {
	const sensitivity = fitted.zeroPointSensitivity ?? [];
	const along = (axis: string) => {
		const i = fitted.covariance.axes.indexOf(axis as never);
		return i < 0 ? 0 : sensitivity[i] * error;
	};
	return {
		zeroPoint: along('zero_point'),
		slope: along('slope'),
		metallicityTerm: withGamma ? along('metallicity_term') : null
	};
}
