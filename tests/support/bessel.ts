/** I0(x) = Σ (x/2)^{2k}/(k!)², the modified Bessel function of order 0 (Abramowitz & Stegun 1964, eq. 9.6.10). */
export function besselI0(x: number): number {
	let term = 1;
	let sum = 1;
	for (let k = 1; k < 200 && term > 1e-18 * sum; k++) {
		term *= (x / 2) ** 2 / (k * k);
		sum += term;
	}
	return sum;
}

/**
 * Intensity-mean magnitude of m = m0 + A·sin φ (A the semi-amplitude): ∫ 10^(−0.4 m) dφ = 10^(−0.4 m0)·
 * I0(0.4 ln10 A), hence ⟨m⟩ = m0 − 2.5 log10 I0(0.4 ln10 A) (integral form of I0: A & S eq. 9.6.16).
 */
export function sinusoidIntensityMean(m0: number, semiAmplitude: number): number {
	return m0 - 2.5 * Math.log10(besselI0(0.4 * Math.LN10 * semiAmplitude));
}
