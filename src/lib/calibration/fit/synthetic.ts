import { uniformFloat64 } from 'pure-rand/distribution/uniformFloat64';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';
import type { CalibratorPoint } from './types';

/** Seeded standard-normal deviates by the Box–Muller transform (Box & Muller 1958, Ann. Math. Stat. 29, 610). */
export function createGaussianStream(seed: number): () => number {
	const rng = xoroshiro128plus(seed);
	let spare: number | null = null;
	return () => {
		if (spare !== null) {
			const value = spare;
			spare = null;
			return value;
		}
		const u = 1 - uniformFloat64(rng);
		const radius = Math.sqrt(-2 * Math.log(u));
		const angle = 2 * Math.PI * uniformFloat64(rng);
		spare = radius * Math.sin(angle);
		return radius * Math.cos(angle);
	};
}

export interface SyntheticRelation {
	zeroPoint: number;
	slope: number;
	metallicityTerm?: number;
	pivotLogPeriod?: number;
	pivotFeh?: number;
	/** σ_int (mag) added to every star. */
	intrinsicScatter?: number;
}

export interface SyntheticSampleOptions {
	count: number;
	seed: number;
	logPeriodRange?: [number, number];
	fehRange?: [number, number];
	/** Per-star measurement error range (mag); each star's error is drawn uniformly in it. */
	absMagErrRange?: [number, number];
	/** Per-star log P error (dex); the true log P is perturbed by it. */
	logPeriodErr?: number;
}

/**
 * Invented calibrators drawn from a known relation, with Gaussian measurement noise and intrinsic
 * scatter, for demos and for checking that fits recover what generated the data.
 */
export function syntheticCalibrators(relation: SyntheticRelation, options: SyntheticSampleOptions): CalibratorPoint[] {
	const gaussian = createGaussianStream(options.seed);
	const uniform = createUniformStream(options.seed ^ 0x5bd1e995);
	const [pMin, pMax] = options.logPeriodRange ?? [0.4, 1.8];
	const [eMin, eMax] = options.absMagErrRange ?? [0.05, 0.15];
	const [fMin, fMax] = options.fehRange ?? [-0.5, 0.3];
	const p0 = relation.pivotLogPeriod ?? 1;
	const f0 = relation.pivotFeh ?? 0;
	const points: CalibratorPoint[] = [];
	for (let k = 0; k < options.count; k++) {
		const logPeriod = pMin + (pMax - pMin) * uniform();
		const feh = fMin + (fMax - fMin) * uniform();
		const absMagErr = eMin + (eMax - eMin) * uniform();
		const truth = relation.zeroPoint + relation.slope * (logPeriod - p0) + (relation.metallicityTerm ?? 0) * (feh - f0);
		const logPeriodErr = options.logPeriodErr ?? 0;
		points.push({
			star: `synthetic-${String(k + 1).padStart(4, '0')}`,
			logPeriod: logPeriod + logPeriodErr * gaussian(),
			absMag: truth + absMagErr * gaussian() + (relation.intrinsicScatter ?? 0) * gaussian(),
			absMagErr,
			logPeriodErr: options.logPeriodErr ?? null,
			feh
		});
	}
	return points;
}

function createUniformStream(seed: number): () => number {
	const rng = xoroshiro128plus(seed);
	return () => uniformFloat64(rng);
}
