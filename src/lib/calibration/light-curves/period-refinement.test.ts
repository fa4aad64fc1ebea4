import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import { describe, expect, test } from 'vitest';
import type { FitSamples } from './fourier-model';
import { refinePeriod } from './period-refinement';

/** Invented sinusoid m = 15 + A sin(2πf t + 0.7) on N uniform random epochs over T days, Gaussian noise σ. */
function sinusoid(
	seed: number,
	n: number,
	baseline: number,
	frequency: number,
	amplitude: number,
	sigma: number
): FitSamples {
	const rng = xoroshiro128plus(seed);
	const gauss = () => Math.sqrt(-2 * Math.log(1 - uniformFloat64(rng))) * Math.cos(2 * Math.PI * uniformFloat64(rng));
	const t = new Float64Array(n);
	const mag = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		t[i] = baseline * uniformFloat64(rng);
		mag[i] = 15 + amplitude * Math.sin(2 * Math.PI * frequency * t[i] + 0.7) + sigma * gauss();
	}
	return { t, mag, err: new Float64Array(n).fill(sigma) };
}

describe('period refinement by nonlinear least squares', () => {
	const frequency = 1 / 6.37;
	const [n, baseline, amplitude, sigma] = [300, 1000, 0.3, 0.02];

	// σ_f = √6·σ / (π·√N·A·T) for a sinusoid of semi-amplitude A sampled N times over T
	// (Montgomery & O'Donoghue 1999, Delta Scuti Star Newsletter 13, 28; from memory). It assumes even
	// coverage of T; uniform random epochs match it on average.
	test("the reported frequency error matches the Montgomery & O'Donoghue formula within 15%", () => {
		const expected = (Math.sqrt(6) * sigma) / (Math.PI * Math.sqrt(n) * amplitude * baseline);
		const refined = refinePeriod(
			sinusoid(11, n, baseline, frequency, amplitude, sigma),
			frequency * (1 + 2e-5),
			1,
			2e-4
		);
		expect(refined.frequencyErr / expected).toBeGreaterThan(0.85);
		expect(refined.frequencyErr / expected).toBeLessThan(1.15);
		expect(refined.periodErrDays).toBeCloseTo(refined.frequencyErr / refined.frequency ** 2, 15);
	});

	test('over 40 seeded noise draws the errors are honest: RMS of (f − f_true)/σ_f within 0.75–1.3', () => {
		let sumSquares = 0;
		const draws = 40;
		for (let seed = 1; seed <= draws; seed++) {
			const refined = refinePeriod(sinusoid(seed, n, baseline, frequency, amplitude, sigma), frequency + 3e-5, 1, 2e-4);
			sumSquares += ((refined.frequency - frequency) / refined.frequencyErr) ** 2;
		}
		const rms = Math.sqrt(sumSquares / draws);
		expect(rms).toBeGreaterThan(0.75);
		expect(rms).toBeLessThan(1.3);
	});

	test('understated errors (σ/3) are rescaled by χ²/ν: the same σ_f as the honest fit at χ²/ν = 1', () => {
		const data = sinusoid(5, n, baseline, frequency, amplitude, sigma);
		const honest = refinePeriod(data, frequency, 1, 2e-4);
		const understated = refinePeriod({ ...data, err: new Float64Array(n).fill(sigma / 3) }, frequency, 1, 2e-4);
		const honestReduced = honest.fit.chiSquare / (n - 4);
		expect(understated.covarianceScale).toBeCloseTo(9 * honestReduced, 6);
		expect(understated.frequencyErr / honest.frequencyErr).toBeCloseTo(
			Math.sqrt(honestReduced) / Math.sqrt(Math.max(1, honestReduced)),
			6
		);
	});
});
