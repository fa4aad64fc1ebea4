import { describe, expect, test } from 'vitest';
import { lightCurveWarnings, type WarningInput } from './light-curve-warnings';

const clean: WarningInput = {
	id: 'star',
	population: 'classical_fundamental',
	periodDays: 5.2,
	frequency: 1 / 5.2,
	gridStep: 1e-4,
	baselineDays: 2000,
	falseAlarmProbability: 1e-30,
	peakToPeakAmplitude: 0.6,
	shape: { amplitudes: [0.25, 0.1], phases: [0, 1], r21: 0.4, r31: null, phi21: 1, phi31: null },
	coverage: { coveredFraction: 1, largestGap: 0.03, largestGapStart: 0.5, bins: 20 },
	aliases: [],
	reducedChiSquare: 1.2,
	residualRms: 0.01
};

const codes = (input: Partial<WarningInput>) =>
	lightCurveWarnings({ ...clean, ...input }).map((warning) => warning.code);

describe('light-curve warnings', () => {
	test('a well-sampled 5.2 d fundamental-mode Cepheid raises none', () => {
		expect(codes({})).toEqual([]);
	});

	// Thresholds are the module's stated constants; classes and period ranges are common practice.
	test.each([
		['period_below_rr_lyrae_limit', { periodDays: 0.55, frequency: 1 / 0.55 }],
		['period_long_period_variable', { periodDays: 240, frequency: 1 / 240 }],
		['period_not_significant', { falseAlarmProbability: 0.02 }],
		['period_at_sampling_frequency', { periodDays: 1 / 1.0027379093, frequency: 1.0027379093 }],
		['few_cycles', { baselineDays: 8 }],
		['phase_gap', { coverage: { coveredFraction: 0.7, largestGap: 0.3, largestGapStart: 0.1, bins: 20 } }],
		['amplitude_unusual', { peakToPeakAmplitude: 0.02 }],
		['light_curve_model_poor', { reducedChiSquare: 240, residualRms: 0.08 }],
		['fourier_pattern_unusual', { shape: { ...clean.shape, r21: 0.05 } }],
		[
			'alias_ambiguity',
			{ aliases: [{ kind: 'one_day' as const, side: 1 as const, frequency: 1.19, periodDays: 0.84, powerRatio: 0.95 }] }
		]
	])('%s', (code, input) => {
		expect(codes(input)).toContain(code);
	});

	test('a low amplitude names blending as a possible cause; a high one does not', () => {
		// Blending with unresolved neighbours dilutes a Cepheid's amplitude (common practice).
		const started = performance.now();
		const message = (peakToPeakAmplitude: number) =>
			lightCurveWarnings({ ...clean, peakToPeakAmplitude }).find((w) => w.code === 'amplitude_unusual')?.message;
		expect(message(0.02)).toContain('blending');
		expect(message(5)).not.toContain('blending');
		console.log(`amplitude warning: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('a skewed curve (R21 = 0.45) is unusual for a first overtone, not for a fundamental-mode star', () => {
		const shape = { ...clean.shape, r21: 0.45 };
		expect(
			codes({ population: 'classical_first_overtone', periodDays: 2, frequency: 0.5, peakToPeakAmplitude: 0.4, shape })
		).toContain('fourier_pattern_unusual');
		expect(codes({ shape })).not.toContain('fourier_pattern_unusual');
	});

	test('a nearly sinusoidal 10 d star sits in the Hertzsprung-progression minimum and is not flagged', () => {
		expect(codes({ periodDays: 10, frequency: 0.1, shape: { ...clean.shape, r21: 0.05 } })).not.toContain(
			'fourier_pattern_unusual'
		);
	});
});
