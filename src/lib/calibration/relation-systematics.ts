/**
 * What a frozen relation version says about its own error budget, read from its content (snake_case,
 * as served): the shared systematic terms of its calibration, the quality of its fit and the R of its
 * Wesenheit band. Versions frozen by engine 2.0.0 and later carry `systematics`, `fit_quality` and
 * `wesenheit_ratio`; earlier versions carry none of them and read as "not recorded".
 *
 * Each term's `effect` is ∂θ/∂term × error for θ = (zero point, slope, γ), so its contribution to a
 * distance modulus at (Δlog P, Δ[Fe/H]) is g·effect with g = (1, Δlog P, Δ[Fe/H]).
 */
import { z } from 'zod';
import { fitQualitySchema, systematicsSchema } from './frozen-content';
import type { CalibrationSystematicId } from './systematics';
import { CalibrationInputError } from './types';

export type RelationSystematicId = CalibrationSystematicId;

export interface RelationSystematicTerm {
	id: RelationSystematicId;
	label: string;
	/** The adopted value (e.g. μ_anchor, the parallax zero point, the fixed slope), when it has one. */
	value: number | null;
	error: number;
	effect: { zeroPoint: number; slope: number; metallicityTerm: number | null };
}

export interface RelationFitQuality {
	reducedChiSquare: number | null;
	degreesOfFreedom: number;
	covarianceScaled: boolean;
	errorsTooSmall: boolean;
}

export interface RelationBudgetRecord {
	/** False for versions frozen before systematics were recorded. */
	recorded: boolean;
	terms: RelationSystematicTerm[];
	fitQuality: RelationFitQuality | null;
	/** R of the relation's Wesenheit band as frozen; null when not recorded or not a Wesenheit band. */
	wesenheitRatio: number | null;
}

/** The budget keys as frozen-content.ts defines them, read on their own from any version's content. */
const budgetKeysSchema = z.object({
	systematics: systematicsSchema.optional(),
	fit_quality: fitQualitySchema.optional(),
	wesenheit_ratio: z.number().positive().nullable().optional()
});

/** Reads the budget keys of a version's content; throws CalibrationInputError if present but malformed. */
export function relationBudgetRecord(content: unknown): RelationBudgetRecord {
	const parsed = budgetKeysSchema.safeParse(content);
	if (!parsed.success) {
		throw new CalibrationInputError(
			parsed.error.issues.map((issue) => ({
				star: null,
				field: issue.path.map(String).join('.'),
				message: `frozen content: ${issue.message}`
			}))
		);
	}
	const { systematics, fit_quality: quality, wesenheit_ratio: ratio } = parsed.data;
	return {
		recorded: systematics !== undefined,
		terms: (systematics?.terms ?? []).map((term) => ({
			id: term.id,
			label: term.label,
			value: term.value,
			error: term.error,
			effect: {
				zeroPoint: term.effect.zero_point,
				slope: term.effect.slope,
				metallicityTerm: term.effect.metallicity_term
			}
		})),
		fitQuality: quality
			? {
					reducedChiSquare: quality.reduced_chi_square,
					degreesOfFreedom: quality.degrees_of_freedom,
					covarianceScaled: quality.covariance_scaled,
					errorsTooSmall: quality.errors_too_small
				}
			: null,
		wesenheitRatio: ratio ?? null
	};
}
