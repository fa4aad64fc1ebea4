/** Evaluates c0 + c1·t + c2·t² + … by Horner's rule; coefficients in ascending order. */
export function polynomial(coefficients: readonly number[], t: number): number {
	let sum = 0;
	for (let i = coefficients.length - 1; i >= 0; i--) sum = sum * t + coefficients[i];
	return sum;
}
