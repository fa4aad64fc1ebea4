/**
 * Natural cubic spline through the knots (x_i, y_i), x strictly increasing: S'' = 0 at both end knots.
 * The second derivatives M_i solve the tridiagonal system
 * h_{i−1} M_{i−1} + 2(h_{i−1} + h_i) M_i + h_i M_{i+1} = 6[(y_{i+1} − y_i)/h_i − (y_i − y_{i−1})/h_{i−1}]
 * with M_0 = M_n = 0 (common practice; e.g. Press et al., Numerical Recipes, Sect. 3.3).
 * Outside the knots the end interval's cubic is extended.
 */
export function naturalCubicSpline(xs: readonly number[], ys: readonly number[]): (x: number) => number {
	const n = xs.length;
	if (n < 2 || ys.length !== n) throw new RangeError('a spline needs at least two knots with one value each');
	for (let i = 1; i < n; i++) {
		if (!(xs[i] > xs[i - 1])) throw new RangeError('spline knots must be strictly increasing');
	}
	const h = Array.from({ length: n - 1 }, (_, i) => xs[i + 1] - xs[i]);
	const m = new Array<number>(n).fill(0);
	if (n > 2) {
		// Thomas algorithm on the interior unknowns M_1 … M_{n−2}.
		const size = n - 2;
		const diag = new Array<number>(size);
		const rhs = new Array<number>(size);
		for (let k = 0; k < size; k++) {
			const i = k + 1;
			diag[k] = 2 * (h[i - 1] + h[i]);
			rhs[k] = 6 * ((ys[i + 1] - ys[i]) / h[i] - (ys[i] - ys[i - 1]) / h[i - 1]);
		}
		for (let k = 1; k < size; k++) {
			const factor = h[k] / diag[k - 1];
			diag[k] -= factor * h[k];
			rhs[k] -= factor * rhs[k - 1];
		}
		m[size] = rhs[size - 1] / diag[size - 1];
		for (let k = size - 2; k >= 0; k--) m[k + 1] = (rhs[k] - h[k + 1] * m[k + 2]) / diag[k];
	}
	return (x: number) => {
		let i = 0;
		while (i < n - 2 && x > xs[i + 1]) i++;
		const width = h[i];
		const right = (x - xs[i]) / width;
		const left = 1 - right;
		return (
			left * ys[i] +
			right * ys[i + 1] +
			(((left ** 3 - left) * m[i] + (right ** 3 - right) * m[i + 1]) * (width * width)) / 6
		);
	};
}
