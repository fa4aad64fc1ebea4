import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { describe, expect, test } from 'vitest';
import { chooseFourierOrder, fitFourier, fourierShape, maxSupportedOrder } from './fourier-model';
import { summariseModel } from './model-summary';
import type { FitSamples } from './fourier-model';
import { sinusoidIntensityMean } from '../../../../tests/support/bessel';

function gaussianSource(seed: number): () => number {
	const rng = xoroshiro128plus(seed);
	return () => Math.sqrt(-2 * Math.log(1 - uniformFloat64(rng))) * Math.cos(2 * Math.PI * uniformFloat64(rng));
}

function samples(n: number, model: (t: number) => number, err: number, noise: () => number = () => 0): FitSamples {
	const t = new Float64Array(n);
	const mag = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		t[i] = 600 * ((i * 0.754877666) % 1);
		mag[i] = model(t[i]) + err * noise();
	}
	return { t, mag, err: new Float64Array(n).fill(err) };
}

describe('Fourier model', () => {
	test('recovers the coefficients of a noise-free third-order curve to 1e-10', () => {
		const frequency = 1 / 5.3;
		const truth = [14.2, 0.2, -0.15, 0.08, 0.05, -0.03, 0.02];
		const curve = (t: number) =>
			truth[0] +
			[1, 2, 3].reduce((total, k) => {
				const angle = 2 * Math.PI * k * frequency * t;
				return total + truth[2 * k - 1] * Math.cos(angle) + truth[2 * k] * Math.sin(angle);
			}, 0);
		const fit = fitFourier(samples(80, curve, 0.01), frequency, 3);
		fit.coefficients.forEach((value, j) => expect(value).toBeCloseTo(truth[j], 10));
		expect(fit.chiSquare).toBeLessThan(1e-15);
	});

	test('BIC picks the true order (3) of a noisy curve, σ = 0.01 mag, seeded noise', () => {
		const frequency = 1 / 7.7;
		const curve = (t: number) => {
			const angle = 2 * Math.PI * frequency * t;
			return 15 + 0.3 * Math.cos(angle) + 0.1 * Math.sin(2 * angle) + 0.05 * Math.cos(3 * angle);
		};
		const choice = chooseFourierOrder(samples(300, curve, 0.01, gaussianSource(7)), frequency, 8);
		expect(choice.fit.order).toBe(3);
		expect(choice.bicByOrder).toHaveLength(8);
	});

	test('order is capped by the number of points (N = 12 → K ≤ 4)', () => {
		expect(maxSupportedOrder(12)).toBe(4);
	});

	// Fourier parameters: R21 = A2/A1, φ21 = φ2 − 2φ1 with m = A0 + Σ A_k cos(kωt + φ_k) (Simon & Lee 1981).
	test('R21 and φ21 of A1 = 0.3, A2 = 0.12, φ1 = 0.4, φ2 = 2.0 are 0.4 and 1.2', () => {
		const shape = fourierShape({
			order: 2,
			coefficients: [15, 0.3 * Math.cos(0.4), -0.3 * Math.sin(0.4), 0.12 * Math.cos(2), -0.12 * Math.sin(2)]
		});
		expect(shape.r21).toBeCloseTo(0.4, 12);
		expect(shape.phi21).toBeCloseTo(1.2, 12);
		expect(shape.r31).toBeNull();
	});
});

describe('model summary', () => {
	// Closed form for m = m0 + A sin φ (tests/support/bessel.ts, Abramowitz & Stegun eqs. 9.6.10, 9.6.16).
	test.each([0.05, 0.3, 0.7, 1.2])(
		'intensity mean of a sinusoid of semi-amplitude %s mag matches the I0 closed form to 1e-12',
		(amplitude) => {
			const summary = summariseModel({
				order: 1,
				coefficients: [15, 0, amplitude],
				covariance: [
					[0, 0, 0],
					[0, 0, 0],
					[0, 0, 0]
				]
			});
			expect(summary.meanMagIntensity.value).toBeCloseTo(sinusoidIntensityMean(15, amplitude), 12);
			expect(summary.meanMagMagnitude.value).toBe(15);
			expect(summary.peakToPeakAmplitude).toBeCloseTo(2 * amplitude, 12);
			// sin 2πφ is largest at φ = 0.25, so the star is brightest (smallest m) at φ = 0.75.
			expect(summary.phaseOfMaximumLight).toBeCloseTo(0.75, 9);
		}
	);

	test('the same closed form holds after fitting 40 sampled epochs of the sinusoid (1e-10)', () => {
		const amplitude = 0.45;
		const frequency = 1 / 3.9;
		const fit = chooseFourierOrder(
			samples(40, (t) => 14 + amplitude * Math.sin(2 * Math.PI * frequency * t), 0.005),
			frequency,
			6
		).fit;
		const summary = summariseModel(fit);
		expect(summary.meanMagIntensity.value).toBeCloseTo(sinusoidIntensityMean(14, amplitude), 10);
	});

	test('mean errors follow the coefficient covariance: σ(⟨m⟩_mag) = √Σ₀₀, σ(⟨m⟩_int) = √Σ₀₀ for a constant curve', () => {
		const covariance = [
			[4e-6, 1e-7, 0],
			[1e-7, 9e-6, 0],
			[0, 0, 9e-6]
		];
		const flat = summariseModel({ order: 1, coefficients: [15, 0, 0], covariance });
		expect(flat.meanMagMagnitude.error).toBeCloseTo(2e-3, 12);
		expect(flat.meanMagIntensity.error).toBeCloseTo(2e-3, 9);
	});
});
