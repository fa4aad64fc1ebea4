/**
 * What a reviewer compares: a proposal's relation against its base version — coefficients with Δ and
 * Δ/σ, the calibrators that changed, the settings that changed, the rationale's text diff, and the
 * downstream change in predicted absolute magnitude at typical periods.
 */
import { diffWords } from 'diff';
import type { RelationVersionContent } from '../calibration/frozen-content';
import type { CoefficientAxis } from '../calibration/types';

/** The parts of a relation a comparison needs; a proposal has them before it is approved. */
export type ComparableRelation = Pick<
	RelationVersionContent,
	| 'band'
	| 'population'
	| 'magnitude_system'
	| 'form'
	| 'coefficients'
	| 'pivot_log_period'
	| 'pivot_feh'
	| 'covariance'
	| 'intrinsic_scatter'
	| 'n_used'
	| 'validity'
	| 'fit'
	| 'calibrator_set'
>;

export interface CoefficientComparison {
	name: 'zero_point' | 'slope' | 'metallicity_term' | 'intrinsic_scatter';
	base: number | null;
	baseError: number | null;
	proposed: number | null;
	proposedError: number | null;
	delta: number | null;
	/**
	 * Δ / √(σ_base² + σ_proposed²). The two fits usually share calibrators, so their errors are
	 * correlated and this understates the significance of a change; it is a guide, not a test.
	 */
	deltaOverSigma: number | null;
}

export interface SettingChange {
	/** Dotted path, e.g. `fit.clipping.sigma`. */
	path: string;
	base: unknown;
	proposed: unknown;
}

export interface PredictionChange {
	logPeriod: number;
	base: number;
	baseError: number;
	proposed: number;
	proposedError: number;
	delta: number;
}

export interface TextChange {
	kind: 'same' | 'added' | 'removed';
	text: string;
}

export interface RelationComparison {
	coefficients: CoefficientComparison[];
	settings: SettingChange[];
	predictions: PredictionChange[];
	rationale: TextChange[];
}

/** log P values where the downstream change in M is reported (P ≈ 3, 10 and 32 days). */
export const COMPARISON_LOG_PERIODS = [0.5, 1.0, 1.5] as const;

function variance(relation: ComparableRelation, axis: CoefficientAxis): number | null {
	const index = relation.covariance.axes.indexOf(axis);
	return index < 0 ? null : relation.covariance.matrix[index][index];
}

function coefficient(
	name: CoefficientComparison['name'],
	base: ComparableRelation | null,
	proposed: ComparableRelation
): CoefficientComparison {
	const value = (relation: ComparableRelation | null) => {
		if (!relation) return null;
		return name === 'intrinsic_scatter' ? relation.intrinsic_scatter : relation.coefficients[name];
	};
	const error = (relation: ComparableRelation | null) => {
		if (!relation || name === 'intrinsic_scatter') return null;
		const v = variance(relation, name);
		return v === null ? null : Math.sqrt(v);
	};
	const [b, p, be, pe] = [value(base), value(proposed), error(base), error(proposed)];
	const delta = b === null || p === null ? null : p - b;
	const combined = be === null || pe === null ? null : Math.hypot(be, pe);
	return {
		name,
		base: b,
		baseError: be,
		proposed: p,
		proposedError: pe,
		delta,
		deltaOverSigma: delta === null || !combined ? null : delta / combined
	};
}

/**
 * M(log P) = a + b(log P − p0) + γ([Fe/H] − f0) and σ_M² = gᵀΣg with g = ∂M/∂(a, b, γ, …); axes not in
 * the covariance (fixed coefficients, a fitted parallax offset) contribute nothing.
 */
export function predictWithError(
	relation: ComparableRelation,
	logPeriod: number,
	feh: number
): { value: number; error: number } {
	const dLogP = logPeriod - relation.pivot_log_period;
	const dFeh = feh - relation.pivot_feh;
	const gamma = relation.coefficients.metallicity_term;
	const value = relation.coefficients.zero_point + relation.coefficients.slope * dLogP + (gamma ?? 0) * dFeh;
	const gradient: Record<CoefficientAxis, number> = {
		zero_point: 1,
		slope: dLogP,
		metallicity_term: dFeh,
		parallax_offset: 0
	};
	const g = relation.covariance.axes.map((axis) => gradient[axis]);
	let sum = 0;
	relation.covariance.matrix.forEach((row, i) => row.forEach((cell, j) => (sum += g[i] * cell * g[j])));
	return { value, error: Math.sqrt(Math.max(0, sum)) };
}

function flatten(value: unknown, path: string, into: Map<string, unknown>): void {
	if (value !== null && typeof value === 'object' && !Array.isArray(value)) {
		for (const [key, inner] of Object.entries(value)) flatten(inner, path ? `${path}.${key}` : key, into);
	} else {
		into.set(path, value);
	}
}

const SETTING_KEYS = [
	'band',
	'population',
	'magnitude_system',
	'form',
	'pivot_log_period',
	'pivot_feh',
	'fit',
	'calibrator_set'
] as const;

function settingChanges(base: ComparableRelation | null, proposed: ComparableRelation): SettingChange[] {
	const before = new Map<string, unknown>();
	const after = new Map<string, unknown>();
	for (const key of SETTING_KEYS) {
		if (base) flatten(base[key], key, before);
		flatten(proposed[key], key, after);
	}
	const paths = [...new Set([...before.keys(), ...after.keys()])].sort();
	return paths
		.filter((path) => JSON.stringify(before.get(path) ?? null) !== JSON.stringify(after.get(path) ?? null))
		.map((path) => ({ path, base: before.get(path) ?? null, proposed: after.get(path) ?? null }));
}

export function rationaleDiff(base: string, proposed: string): TextChange[] {
	return diffWords(base, proposed).map((part) => ({
		kind: part.added ? 'added' : part.removed ? 'removed' : 'same',
		text: part.value
	}));
}

/** Compares a proposal with its base version (null for a relation's first version). */
export function compareRelations(
	base: (ComparableRelation & { rationale: string }) | null,
	proposed: ComparableRelation & { rationale: string }
): RelationComparison {
	const names: CoefficientComparison['name'][] = ['zero_point', 'slope', 'metallicity_term', 'intrinsic_scatter'];
	const feh = proposed.pivot_feh;
	return {
		coefficients: names.map((name) => coefficient(name, base, proposed)),
		settings: settingChanges(base, proposed),
		predictions: base
			? COMPARISON_LOG_PERIODS.map((logPeriod) => {
					const before = predictWithError(base, logPeriod, feh);
					const after = predictWithError(proposed, logPeriod, feh);
					return {
						logPeriod,
						base: before.value,
						baseError: before.error,
						proposed: after.value,
						proposedError: after.error,
						delta: after.value - before.value
					};
				})
			: [],
		rationale: rationaleDiff(base?.rationale ?? '', proposed.rationale)
	};
}
