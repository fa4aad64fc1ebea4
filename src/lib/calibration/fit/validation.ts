import { CalibrationInputError, type InputIssue } from '../types';
import { FIT_METHODS, WEIGHTED_COVARIANCE_SCALINGS, type CalibratorPoint, type LinearFitOptions } from './types';

/** Number of coefficients a fit with these options estimates (σ_int not included). */
export function countFreeCoefficients(options: LinearFitOptions): number {
	return (
		(options.fixedZeroPoint == null ? 1 : 0) + (options.fixedSlope == null ? 1 : 0) + (options.metallicityTerm ? 1 : 0)
	);
}

/** Smallest number of stars that leaves at least one degree of freedom. */
export function minimumStars(options: LinearFitOptions): number {
	return countFreeCoefficients(options) + (options.method === 'ml_scatter' ? 1 : 0) + 1;
}

const isFiniteNumber = (value: unknown): value is number => typeof value === 'number' && Number.isFinite(value);

/**
 * Checks calibrators and options and throws one CalibrationInputError listing every problem,
 * each naming the star and field.
 */
export function validateFitInput(points: readonly CalibratorPoint[], options: LinearFitOptions): void {
	const issues: InputIssue[] = [];
	const option = (field: string, message: string) => issues.push({ star: null, field, message });

	if (!(FIT_METHODS as readonly string[]).includes(options.method)) {
		option('method', `unknown method "${String(options.method)}" (expected ${FIT_METHODS.join(', ')})`);
	}
	if (
		options.weightedCovariance !== undefined &&
		!(WEIGHTED_COVARIANCE_SCALINGS as readonly string[]).includes(options.weightedCovariance)
	) {
		option(
			'weightedCovariance',
			`unknown scaling "${String(options.weightedCovariance)}" (expected ${WEIGHTED_COVARIANCE_SCALINGS.join(', ')})`
		);
	}
	for (const field of ['pivotLogPeriod', 'pivotFeh', 'fixedSlope', 'fixedZeroPoint'] as const) {
		const value = options[field];
		if (value != null && !isFiniteNumber(value)) option(field, 'must be a finite number');
	}
	if (options.fixedSlope != null && options.fixedZeroPoint != null) {
		option('fixedZeroPoint', 'a fit cannot hold both the slope and the zero point fixed');
	}
	if (options.clipping) {
		const { sigma, maxIterations } = options.clipping;
		if (!isFiniteNumber(sigma) || sigma <= 0) option('clipping.sigma', 'must be a positive number');
		if (!Number.isInteger(maxIterations) || maxIterations < 1) {
			option('clipping.maxIterations', 'must be a positive integer');
		}
	}
	if (options.bootstrap) {
		const { resamples, seed, level } = options.bootstrap;
		if (!Number.isInteger(resamples) || resamples < 2) option('bootstrap.resamples', 'must be an integer ≥ 2');
		if (!Number.isInteger(seed) || seed < 0 || seed >= 2 ** 32) {
			option('bootstrap.seed', 'must be an integer in [0, 2^32)');
		}
		if (level != null && !(isFiniteNumber(level) && level > 0 && level < 1)) {
			option('bootstrap.level', 'must lie strictly between 0 and 1');
		}
	}

	const errorsMustBePositive = options.method !== 'ols';
	const seen = new Set<string>();
	points.forEach((point, index) => {
		const star = typeof point.star === 'string' && point.star !== '' ? point.star : `row ${index + 1}`;
		const issue = (field: string, message: string) => issues.push({ star, field, message });
		if (star !== point.star) issue('star', 'missing star name');
		else if (seen.has(star)) issue('star', 'appears more than once');
		seen.add(star);
		if (!isFiniteNumber(point.logPeriod)) issue('logPeriod', 'must be a finite number');
		if (!isFiniteNumber(point.absMag)) issue('absMag', 'must be a finite number');
		if (!isFiniteNumber(point.absMagErr) || point.absMagErr < 0) {
			issue('absMagErr', 'must be a finite number ≥ 0');
		} else if (errorsMustBePositive && point.absMagErr === 0) {
			issue('absMagErr', `must be positive for method ${options.method}`);
		}
		if (point.logPeriodErr != null && !(isFiniteNumber(point.logPeriodErr) && point.logPeriodErr >= 0)) {
			issue('logPeriodErr', 'must be a finite number ≥ 0');
		}
		if (options.metallicityTerm) {
			if (!isFiniteNumber(point.feh)) issue('feh', 'required (finite) when the fit has a metallicity term');
			if (point.fehErr != null && !(isFiniteNumber(point.fehErr) && point.fehErr >= 0)) {
				issue('fehErr', 'must be a finite number ≥ 0');
			}
		}
	});

	const needed = minimumStars(options);
	if (points.length < needed) {
		option(
			'points',
			`${points.length} calibrators cannot constrain ${countFreeCoefficients(options)} coefficients` +
				`${options.method === 'ml_scatter' ? ' and σ_int' : ''}: at least ${needed} are needed`
		);
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);
}
