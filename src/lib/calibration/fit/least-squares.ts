import { Matrix, QrDecomposition } from 'ml-matrix';

/** Input of a general linear least-squares problem y ≈ Xβ. */
export interface LeastSquaresProblem {
	/** Design matrix X, one row per observation, one column per coefficient. */
	design: readonly (readonly number[])[];
	response: readonly number[];
	/** Weights wᵢ (usually 1/σᵢ²); all 1 when omitted. */
	weights?: readonly number[] | null;
}

export interface LeastSquaresSolution {
	coefficients: number[];
	/** (XᵀWX)⁻¹, not multiplied by any residual variance. */
	unscaledCovariance: number[][];
	/** yᵢ − (Xβ)ᵢ, unweighted. */
	residuals: number[];
	/** Σ wᵢ rᵢ² (the plain residual sum of squares when unweighted). */
	weightedResidualSumOfSquares: number;
	/** n − p. */
	degreesOfFreedom: number;
}

/** Thrown when the columns of the design matrix are linearly dependent (to working precision). */
export class RankDeficientDesignError extends Error {
	readonly column: number;
	constructor(column: number) {
		super(`design matrix is rank deficient at column ${column}`);
		this.name = 'RankDeficientDesignError';
		this.column = column;
	}
}

/**
 * Weighted linear least squares, minimising Σ wᵢ (yᵢ − xᵢᵀβ)², by Householder QR of √W·X·D, where
 * D scales every column to unit norm. β = D·R⁻¹Qᵀ√W·y and (XᵀWX)⁻¹ = D·R⁻¹R⁻ᵀ·D.
 * (Golub & Van Loan, Matrix Computations, §5.3; the normal equations are never formed, since they
 * square the condition number: NIST StRD Filip is unsolvable that way in double precision.)
 */
export function solveLeastSquares(problem: LeastSquaresProblem): LeastSquaresSolution {
	const { design, response } = problem;
	const n = design.length;
	const p = n > 0 ? design[0].length : 0;
	if (response.length !== n) throw new RangeError('design and response differ in length');
	if (p === 0 || n < p) throw new RangeError(`need at least as many rows as columns (${n} < ${p})`);
	const weights = problem.weights ?? null;
	if (weights && weights.length !== n) throw new RangeError('weights and response differ in length');

	const rootWeight = new Float64Array(n);
	for (let i = 0; i < n; i++) rootWeight[i] = weights ? Math.sqrt(weights[i]) : 1;

	const columnScale = new Float64Array(p);
	for (let j = 0; j < p; j++) {
		let sumSquares = 0;
		for (let i = 0; i < n; i++) sumSquares += (rootWeight[i] * design[i][j]) ** 2;
		if (sumSquares === 0) throw new RankDeficientDesignError(j);
		columnScale[j] = 1 / Math.sqrt(sumSquares);
	}

	const scaled = new Matrix(n, p);
	const rhs = new Matrix(n, 1);
	for (let i = 0; i < n; i++) {
		for (let j = 0; j < p; j++) scaled.set(i, j, rootWeight[i] * design[i][j] * columnScale[j]);
		rhs.set(i, 0, rootWeight[i] * response[i]);
	}

	const qr = new QrDecomposition(scaled);
	const r = qr.upperTriangularMatrix;
	// Columns have unit norm, so |R_kk| is the part of column k not explained by the earlier ones.
	const tolerance = Math.max(n, p) * Number.EPSILON;
	for (let k = 0; k < p; k++) {
		if (!(Math.abs(r.get(k, k)) > tolerance)) throw new RankDeficientDesignError(k);
	}

	const scaledBeta = qr.solve(rhs);
	const coefficients = Array.from({ length: p }, (_, j) => scaledBeta.get(j, 0) * columnScale[j]);

	const rInverse = invertUpperTriangular(r, p);
	const unscaledCovariance: number[][] = [];
	for (let a = 0; a < p; a++) {
		const row: number[] = [];
		for (let b = 0; b < p; b++) {
			let sum = 0;
			for (let k = Math.max(a, b); k < p; k++) sum += rInverse[a][k] * rInverse[b][k];
			row.push(sum * columnScale[a] * columnScale[b]);
		}
		unscaledCovariance.push(row);
	}

	const residuals: number[] = [];
	let weightedResidualSumOfSquares = 0;
	for (let i = 0; i < n; i++) {
		let fitted = 0;
		for (let j = 0; j < p; j++) fitted += design[i][j] * coefficients[j];
		const residual = response[i] - fitted;
		residuals.push(residual);
		weightedResidualSumOfSquares += (weights ? weights[i] : 1) * residual * residual;
	}

	return {
		coefficients,
		unscaledCovariance,
		residuals,
		weightedResidualSumOfSquares,
		degreesOfFreedom: n - p
	};
}

function invertUpperTriangular(r: Matrix, p: number): number[][] {
	const inverse = Array.from({ length: p }, () => new Array<number>(p).fill(0));
	for (let j = 0; j < p; j++) {
		inverse[j][j] = 1 / r.get(j, j);
		for (let i = j - 1; i >= 0; i--) {
			let sum = 0;
			for (let k = i + 1; k <= j; k++) sum += r.get(i, k) * inverse[k][j];
			inverse[i][j] = -sum / r.get(i, i);
		}
	}
	return inverse;
}
