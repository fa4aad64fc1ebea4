/**
 * How well the points cover one cycle: the fraction of equal phase bins holding at least one point, and
 * the largest empty stretch of phase between neighbouring points (around the circle).
 */
export interface PhaseCoverage {
	/** Fraction of PHASE_BINS bins with ≥ 1 point. */
	coveredFraction: number;
	/** Largest gap between neighbouring phases (cycles, 0–1). */
	largestGap: number;
	/** Phase where the largest gap starts. */
	largestGapStart: number;
	bins: number;
}

export const PHASE_BINS = 20;

export function phaseCoverage(times: ArrayLike<number>, frequency: number, timeZero = 0): PhaseCoverage {
	const phases = Array.from(times, (time) => {
		const phase = (time - timeZero) * frequency;
		return phase - Math.floor(phase);
	}).sort((a, b) => a - b);
	const occupied = new Set(phases.map((phase) => Math.min(PHASE_BINS - 1, Math.floor(phase * PHASE_BINS))));
	let largestGap = phases[0] + 1 - phases[phases.length - 1];
	let largestGapStart = phases[phases.length - 1];
	for (let i = 1; i < phases.length; i++) {
		const gap = phases[i] - phases[i - 1];
		if (gap > largestGap) {
			largestGap = gap;
			largestGapStart = phases[i - 1];
		}
	}
	return { coveredFraction: occupied.size / PHASE_BINS, largestGap, largestGapStart, bins: PHASE_BINS };
}
