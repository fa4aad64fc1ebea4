import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { fitLinearRelation } from './linear-fit';
import { RankDeficientDesignError, solveLeastSquares } from './least-squares';
import { closedFormSolver, prepareFitData } from './model';

/** Significant digits shared by a computed and a certified value (LRE, McCullough 1998, Am. Stat. 52, 358). */
function digitsAgreed(computed: number, certified: number): number {
	if (computed === certified) return 15;
	return Math.min(15, -Math.log10(Math.abs(computed - certified) / Math.abs(certified)));
}

function readCsv(text: string): number[][] {
	return text
		.replace(/^\uFEFF/, '')
		.trim()
		.split(/\r?\n/)
		.slice(1)
		.map((line) => line.split(',').map(Number));
}

/** Data block and certified values of a NIST StRD .dat file, parsed from its own text. */
function parseNorris(text: string) {
	const lines = text.split(/\r?\n/);
	const number = (pattern: RegExp) => {
		const match = lines.map((line) => line.match(pattern)).find(Boolean);
		if (!match) throw new Error(`not found: ${pattern}`);
		return match.slice(1).map(Number);
	};
	const float = '([-+]?\\d*\\.\\d+(?:E[-+]?\\d+)?)';
	const [b0, se0] = number(new RegExp(`^\\s+B0\\s+${float}\\s+${float}`));
	const [b1, se1] = number(new RegExp(`^\\s+B1\\s+${float}\\s+${float}`));
	const [residualSd] = number(new RegExp(`Standard Deviation\\s+${float}`));
	const [rSquared] = number(new RegExp(`R-Squared\\s+${float}`));
	const start = lines.findIndex((line) => /^Data:\s+y\s+x/.test(line));
	const rows = lines
		.slice(start + 1)
		.map((line) => line.trim())
		.filter((line) => line !== '')
		.map((line) => line.split(/\s+/).map(Number));
	return { b0, se0, b1, se1, residualSd, rSquared, rows };
}

// NIST StRD Norris (public-domain fixture tests/fixtures/nist/Norris.dat, certified values in its header).
describe('NIST StRD Norris through the ordinary least-squares fit', () => {
	const norris = parseNorris(
		readFileSync(join(import.meta.dirname, '..', '..', '..', '..', 'tests', 'fixtures', 'nist', 'Norris.dat'), 'utf8')
	);
	const points = norris.rows.map(([y, x], i) => ({ star: `obs-${i + 1}`, logPeriod: x, absMag: y, absMagErr: 0 }));
	const result = fitLinearRelation(points, { method: 'ols', pivotLogPeriod: 0 });

	test('reads all 36 observations', () => {
		expect(norris.rows).toHaveLength(36);
	});

	test.each([
		['B0 (zero point)', () => result.coefficients.zeroPoint, norris.b0],
		['B1 (slope)', () => result.coefficients.slope, norris.b1],
		['SE(B0)', () => result.errors.zeroPoint as number, norris.se0],
		['SE(B1)', () => result.errors.slope as number, norris.se1],
		['residual SD', () => result.residualSd, norris.residualSd],
		['R²', () => result.rSquared as number, norris.rSquared]
	])('%s agrees with the certified value to ≥ 11 significant digits', (_, computed, certified) => {
		expect(digitsAgreed(computed(), certified)).toBeGreaterThanOrEqual(11);
	});

	test('the closed-form centred solver used by the bootstrap agrees to ≥ 12 digits', () => {
		const data = prepareFitData(points, 0, 0, false);
		const model = {
			method: 'ols' as const,
			axes: ['zero_point', 'slope'] as const,
			fixedZeroPoint: null,
			fixedSlope: null
		};
		const beta = closedFormSolver(
			data,
			{ ...model, axes: [...model.axes] },
			data.stars.map((_, i) => i),
			new Float64Array(36).fill(1)
		);
		expect(beta).not.toBeNull();
		expect(digitsAgreed((beta as number[])[0], norris.b0)).toBeGreaterThanOrEqual(12);
		expect(digitsAgreed((beta as number[])[1], norris.b1)).toBeGreaterThanOrEqual(12);
	});
});

const NIST = 'nist-strd';
const nistTitle = hasReferenceData(NIST)
	? 'NIST StRD reference sets (nist-strd/)'
	: `NIST StRD reference sets — skipped: ${missingReason(NIST)}`;

describe.skipIf(!hasReferenceData(NIST))(nistTitle, () => {
	const certified = hasReferenceData(NIST) ? JSON.parse(readReferenceFile(NIST, 'certified_full_precision.json')) : {};

	// NoInt1/NoInt2: certified values from certified_full_precision.json (marked from memory there),
	// cross-checked against noint*_compare.csv (9-10 digits).
	test.each([
		['NoInt1', 'noint1.csv'],
		['NoInt2', 'noint2.csv']
	])('%s through the fixed-zero-point path (regression through the origin) to ≥ 12 digits', (name, file) => {
		const rows = readCsv(readReferenceFile('nist-strd', file));
		const points = rows.map(([y, x], i) => ({ star: `obs-${i + 1}`, logPeriod: x, absMag: y, absMagErr: 0 }));
		const result = fitLinearRelation(points, { method: 'ols', pivotLogPeriod: 0, fixedZeroPoint: 0 });
		const expected = certified[name];
		expect(result.covariance.axes).toEqual(['slope']);
		expect(digitsAgreed(result.coefficients.slope, expected.B[0])).toBeGreaterThanOrEqual(12);
		expect(digitsAgreed(result.errors.slope as number, expected.SE[0])).toBeGreaterThanOrEqual(12);
		expect(digitsAgreed(result.residualSd, expected.resid_sd)).toBeGreaterThanOrEqual(12);
		expect(digitsAgreed(result.rSquared as number, expected.r2)).toBeGreaterThanOrEqual(12);
	});

	// Longley: 7 certified coefficients and SEs (certified_full_precision.json, several sources agreeing).
	test('Longley (6 predictors + intercept) through solveLeastSquares: ≥ 11 digits in every B and SE', () => {
		const rows = readCsv(readReferenceFile('nist-strd', 'longley.csv'));
		const solution = solveLeastSquares({
			design: rows.map((row) => [1, ...row.slice(1)]),
			response: rows.map((row) => row[0])
		});
		const sd = Math.sqrt(solution.weightedResidualSumOfSquares / solution.degreesOfFreedom);
		const { B, SE } = certified.Longley;
		solution.coefficients.forEach((b, j) => {
			expect(digitsAgreed(b, B[j])).toBeGreaterThanOrEqual(11);
			expect(digitsAgreed(Math.sqrt(solution.unscaledCovariance[j][j]) * sd, SE[j])).toBeGreaterThanOrEqual(11);
		});
		expect(digitsAgreed(sd, certified.Longley.resid_sd_9digits)).toBeGreaterThanOrEqual(9);
	});

	// Filip: 10th-degree polynomial in x1 (powers formed here; the stored powers are rounded).
	// Condition number of the raw power basis ~1e15 (NIST rates it higher difficulty): QR in double
	// precision reaches 7.5 digits, normal equations reach none.
	test('Filip (10th-degree polynomial) through solveLeastSquares: ≥ 7 digits in every B, first six SEs', () => {
		const rows = readCsv(readReferenceFile('nist-strd', 'filip.csv'));
		const solution = solveLeastSquares({
			design: rows.map((row) => Array.from({ length: 11 }, (_, k) => row[1] ** k)),
			response: rows.map((row) => row[0])
		});
		const sd = Math.sqrt(solution.weightedResidualSumOfSquares / solution.degreesOfFreedom);
		const { B, SE_first } = certified.Filip;
		const coefficientDigits = solution.coefficients.map((b, j) => digitsAgreed(b, B[j]));
		expect(Math.min(...coefficientDigits)).toBeGreaterThanOrEqual(7);
		SE_first.forEach((se: number, j: number) => {
			expect(digitsAgreed(Math.sqrt(solution.unscaledCovariance[j][j]) * sd, se)).toBeGreaterThanOrEqual(7);
		});
	});

	// Wampler1: exact polynomial y = 1 + x + … + x⁵ (certified B all 1, wampler1_compare.csv).
	test('Wampler1 (exact quintic) recovers every B = 1 to ≥ 9 digits', () => {
		const rows = readCsv(readReferenceFile('nist-strd', 'wampler1.csv'));
		const solution = solveLeastSquares({
			design: rows.map((row) => Array.from({ length: 6 }, (_, k) => row[1] ** k)),
			response: rows.map((row) => row[0])
		});
		for (const b of solution.coefficients) expect(Math.abs(b - 1)).toBeLessThan(1e-9);
	});
});

describe('solveLeastSquares inputs', () => {
	test('weights w scale the problem like √w applied to rows (a row with weight 4 equals two copies twice over)', () => {
		// Common practice: weighted LS with integer weights equals unweighted LS with repeated rows.
		const design = [
			[1, 0],
			[1, 1],
			[1, 2],
			[1, 3]
		];
		const response = [0.1, 0.9, 2.2, 2.8];
		const weighted = solveLeastSquares({ design, response, weights: [1, 2, 1, 3] });
		const repeated = solveLeastSquares({
			design: [design[0], design[1], design[1], design[2], design[3], design[3], design[3]],
			response: [0.1, 0.9, 0.9, 2.2, 2.8, 2.8, 2.8]
		});
		weighted.coefficients.forEach((b, j) => expect(b).toBeCloseTo(repeated.coefficients[j], 13));
	});

	test('collinear columns are reported as rank deficient, not solved', () => {
		expect(() =>
			solveLeastSquares({
				design: [
					[1, 2],
					[1, 2],
					[1, 2]
				],
				response: [1, 2, 3]
			})
		).toThrow(RankDeficientDesignError);
	});
});
