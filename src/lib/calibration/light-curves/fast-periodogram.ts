/**
 * Fast generalised Lomb–Scargle periodogram, O(N log N + M log M): the trigonometric sums of
 * periodogram.ts come from two FFTs after "extirpolation" (Press & Rybicki 1989, ApJ 338, 277).
 *
 * Each point's value v at fractional grid position x = t·δf·L (mod L) is spread onto the `order` nearest
 * integer positions j with Lagrange weights ℓ_j(x), so that Σ_j ℓ_j(x)·e^{2πi·k·j/L} ≈ e^{2πi·k·x/L}
 * (reverse interpolation). Then Σ_i v_i e^{2πi·k·δf·t_i} ≈ the k-th bin of the FFT of the spread grid.
 * Frequencies are whole multiples of δf (frequency-grid.ts), so bin k is f = k·δf. The two real inputs
 * w and w·y share one complex FFT (re = w, im = w·y, separated by conjugate symmetry); Σw cos 2ωt and
 * Σw sin 2ωt, hence Σw cos² ωt and Σw cos ωt sin ωt, come from a real FFT of w spread at doubled
 * positions 2x (mod L), read at the same bins. The signal-bearing sums (w·y) need the finer grid.
 */
import FFT from 'fft.js';
import type { FrequencyGrid } from './frequency-grid';
import { centredMagnitudes, powerFromSums, type Periodogram, type TrigSums, type WeightedSamples } from './periodogram';

export interface FastPeriodogramOptions {
	/** Length of the FFT for Σw e^{iωt} and Σw·y e^{iωt}, as a multiple of the highest bin; default 3. */
	fftOversampling?: number;
	/** The same for Σw e^{2iωt}; default 2.5. */
	doubledFftOversampling?: number;
	/** Points each value is spread over; default 36. */
	extirpolationOrder?: number;
}

/**
 * With FFT lengths ≥ 3× and 2.5× the highest bin (up to twice that after rounding to a power of two) and
 * 36-point spreading, powers stay within 4e-4 of the exact ones on OGLE light curves even at the least
 * favourable grid sizes (typically ≤ 1e-5), inside the ~1e-3 of astropy's fast method with its defaults.
 * Spreading costs O(N·order), small beside the FFTs.
 */
export const DEFAULT_FFT_OVERSAMPLING = 3;
export const DEFAULT_DOUBLED_FFT_OVERSAMPLING = 2.5;
export const DEFAULT_EXTIRPOLATION_ORDER = 36;

function nextPowerOfTwo(value: number): number {
	let size = 4;
	while (size < value) size *= 2;
	return size;
}

/** Lagrange denominators Π_{k≠m}(m − k) for nodes 0 … order − 1. */
function lagrangeDenominators(order: number): Float64Array {
	const denominators = new Float64Array(order);
	for (let m = 0; m < order; m++) {
		let product = 1;
		for (let k = 0; k < order; k++) if (k !== m) product *= m - k;
		denominators[m] = product;
	}
	return denominators;
}

/**
 * Adds each value v_i, spread over `order` neighbours of position x_i, to out[stride·j + offset] for grid
 * index j (indices wrap, as the FFT is periodic in them).
 */
function extirpolate(
	positions: Float64Array,
	values: Float64Array,
	size: number,
	order: number,
	out: Float64Array,
	stride: number,
	offset: number
): void {
	const denominators = lagrangeDenominators(order);
	const half = Math.floor((order - 1) / 2);
	for (let i = 0; i < positions.length; i++) {
		const x = positions[i];
		const floor = Math.floor(x);
		if (x === floor) {
			out[stride * (floor % size) + offset] += values[i];
			continue;
		}
		const low = floor - half;
		const u = x - low;
		let product = 1;
		for (let k = 0; k < order; k++) product *= u - k;
		for (let m = 0; m < order; m++) {
			let j = (low + m) % size;
			if (j < 0) j += size;
			out[stride * j + offset] += (product / ((u - m) * denominators[m])) * values[i];
		}
	}
}

interface Workspace {
	transform: FFT;
	input: Float64Array;
	spectrum: Float64Array;
}

// Twiddle tables and buffers depend on the size only; rebuilding them per call costs as much as the FFT.
// Sizes up to 2^21 (64 MB of buffers in all) are kept for the next call.
const workspaces = new Map<string, Workspace>();
const LARGEST_KEPT_SIZE = 2 ** 21;
function workspaceOf(size: number, kind: 'complex' | 'real'): Workspace {
	const key = `${kind}:${size}`;
	let workspace = workspaces.get(key);
	if (!workspace) {
		workspace = {
			transform: new FFT(size),
			input: new Float64Array(kind === 'complex' ? 2 * size : size),
			spectrum: new Float64Array(2 * size)
		};
		if (size <= LARGEST_KEPT_SIZE) workspaces.set(key, workspace);
	}
	workspace.input.fill(0);
	return workspace;
}

export function fastPeriodogram(
	series: WeightedSamples,
	grid: FrequencyGrid,
	options: FastPeriodogramOptions = {}
): Periodogram {
	const oversampling = options.fftOversampling ?? DEFAULT_FFT_OVERSAMPLING;
	const doubledOversampling = options.doubledFftOversampling ?? DEFAULT_DOUBLED_FFT_OVERSAMPLING;
	const order = options.extirpolationOrder ?? DEFAULT_EXTIRPOLATION_ORDER;
	const highestBin = grid.firstIndex + grid.count - 1;
	const size = nextPowerOfTwo(oversampling * (highestBin + 1));
	const doubledSize = nextPowerOfTwo(doubledOversampling * (highestBin + 1));
	const n = series.t.length;
	const { y, yy } = centredMagnitudes(series);
	const positions = new Float64Array(n);
	const doubledPositions = new Float64Array(n);
	const wy = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		positions[i] = (series.t[i] * grid.step * size) % size;
		doubledPositions[i] = (2 * series.t[i] * grid.step * doubledSize) % doubledSize;
		wy[i] = series.weight[i] * y[i];
	}
	const packed = workspaceOf(size, 'complex');
	extirpolate(positions, series.weight, size, order, packed.input, 2, 0);
	extirpolate(positions, wy, size, order, packed.input, 2, 1);
	packed.transform.transform(packed.spectrum, packed.input);
	const doubled = workspaceOf(doubledSize, 'real');
	extirpolate(doubledPositions, series.weight, doubledSize, order, doubled.input, 1, 0);
	doubled.transform.realTransform(doubled.spectrum, doubled.input);
	const spectrum = packed.spectrum;
	const doubledSpectrum = doubled.spectrum;

	// fft.js computes U_k = Σ u_j e^{−2πi·kj/L}; the sums need e^{+…}, i.e. conjugates of the real parts' spectra.
	const power = new Float64Array(grid.count);
	const sums: TrigSums = { c: 0, s: 0, yc: 0, ys: 0, cc: 0, cs: 0 };
	for (let k = 0; k < grid.count; k++) {
		const bin = grid.firstIndex + k;
		const mirror = size - bin;
		const ur = spectrum[2 * bin];
		const ui = spectrum[2 * bin + 1];
		const vr = spectrum[2 * mirror];
		const vi = spectrum[2 * mirror + 1];
		sums.c = 0.5 * (ur + vr);
		sums.s = 0.5 * (vi - ui);
		sums.yc = 0.5 * (ui + vi);
		sums.ys = 0.5 * (ur - vr);
		sums.cc = 0.5 * (1 + doubledSpectrum[2 * bin]);
		sums.cs = -0.5 * doubledSpectrum[2 * bin + 1];
		power[k] = powerFromSums(sums, yy);
	}
	return { grid, power, method: 'fast' };
}
