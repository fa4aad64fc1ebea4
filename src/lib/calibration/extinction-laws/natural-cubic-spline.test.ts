import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { naturalCubicSpline } from './natural-cubic-spline';

describe('natural cubic spline', () => {
	const xs = [0, 0.4, 1.1, 1.7, 2.5, 3.0];
	const ys = [0.2, -0.5, 1.3, 0.9, 2.2, 1.0];
	const spline = naturalCubicSpline(xs, ys);
	const h = 1e-4;
	const second = (x: number) => (spline(x + h) - 2 * spline(x) + spline(x - h)) / (h * h);
	const first = (x: number) => (spline(x + h) - spline(x - h)) / (2 * h);

	test('passes through its knots', () => {
		xs.forEach((x, i) => expect(spline(x)).toBeCloseTo(ys[i], 12));
	});

	// Defining properties of the natural spline (e.g. Press et al., Numerical Recipes, Sect. 3.3): S' and S'' are
	// continuous at interior knots and S'' = 0 at both ends.
	test('has continuous first and second derivatives and zero curvature at the ends', () => {
		for (const x of xs.slice(1, -1)) {
			expect(Math.abs(first(x + 1e-3) - first(x - 1e-3))).toBeLessThan(0.05);
			expect(Math.abs(second(x + 1e-3) - second(x - 1e-3))).toBeLessThan(0.5);
		}
		expect(Math.abs(second(xs[0] + h))).toBeLessThan(0.01);
		expect(Math.abs(second(xs[xs.length - 1] - h))).toBeLessThan(0.01);
	});

	// A straight line has S'' = 0 everywhere, so the natural spline through samples of it is the line itself.
	test('reproduces straight lines exactly', () => {
		fc.assert(
			fc.property(
				fc.double({ min: -5, max: 5, noNaN: true }),
				fc.double({ min: -5, max: 5, noNaN: true }),
				fc.double({ min: 0, max: 3, noNaN: true }),
				(slope, intercept, x) => {
					const line = naturalCubicSpline(
						xs,
						xs.map((k) => intercept + slope * k)
					);
					expect(line(x)).toBeCloseTo(intercept + slope * x, 9);
				}
			)
		);
	});

	test('refuses unsorted or too few knots', () => {
		expect(() => naturalCubicSpline([0, 1, 1], [0, 1, 2])).toThrow(RangeError);
		expect(() => naturalCubicSpline([0], [0])).toThrow(RangeError);
		expect(naturalCubicSpline([0, 2], [1, 3])(1)).toBeCloseTo(2, 12);
	});
});
