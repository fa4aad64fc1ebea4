import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { LightCurveUpload } from './light-curve-upload.entity';

/**
 * The analysis of one star in one band of a light-curve upload: period and its error, false-alarm
 * probability, amplitude, epoch of maximum, both mean magnitudes with errors, the Fourier model (order
 * and coefficients, phase zero at maximum light), warnings, a thinned periodogram for plots, and the
 * engine version that produced it. Written once, never updated.
 */
export const LightCurveResult = defineEntity({
	name: 'LightCurveResult',
	tableName: 'app_light_curve_result',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		upload: p.manyToOne(LightCurveUpload).deleteRule('cascade').index(),
		/** Position of the series in the file (stable order for tables). */
		position: p.integer(),
		star: p.string().length(100),
		band: p.string().length(20).nullable(),
		population: p.string().length(40),
		timeFrame: p.string().length(10),
		nPoints: p.integer(),
		baselineDays: p.double().runtimeType('number'),
		periodDays: p.double().runtimeType('number'),
		periodErrDays: p.double().runtimeType('number'),
		falseAlarmProbability: p.double().runtimeType('number'),
		peakPower: p.double().runtimeType('number'),
		amplitude: p.double().runtimeType('number'),
		epochOfMaximum: p.double().runtimeType('number'),
		meanMagIntensity: p.double().runtimeType('number'),
		meanMagIntensityErr: p.double().runtimeType('number'),
		meanMagMagnitude: p.double().runtimeType('number'),
		meanMagMagnitudeErr: p.double().runtimeType('number'),
		fourierOrder: p.integer(),
		/** [A₀, a₁, b₁, …]: m(φ) = A₀ + Σ aₖ cos 2πkφ + bₖ sin 2πkφ, φ = (t − epoch of maximum)/P mod 1. */
		fourierCoefficients: p.json<number[]>(),
		/** Amplitudes, phases, R21, R31, φ21, φ31. */
		fourierShape: p.json<Record<string, unknown>>(),
		reducedChiSquare: p.double().runtimeType('number').nullable(),
		residualRms: p.double().runtimeType('number'),
		periodogramMethod: p.string().length(10),
		phaseCoverage: p.json<Record<string, number>>(),
		aliases: p.json<Record<string, unknown>[]>(),
		warnings: p.json<Record<string, unknown>[]>(),
		/** { frequency: number[], power: number[] }, thinned to at most a few thousand points. */
		periodogram: p.json<{ frequency: number[]; power: number[] }>(),
		engineVersion: p.string().length(40),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type LightCurveResultEntity = InferEntity<typeof LightCurveResult>;
