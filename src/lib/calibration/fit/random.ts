import { uniformInt } from 'pure-rand/distribution/uniformInt';
import { xoroshiro128plus } from 'pure-rand/generator/xoroshiro128plus';

/** The generator every Candlebook resampling uses; recorded with its seed in each result. */
export const RESAMPLING_GENERATOR = 'xoroshiro128plus' as const;

/** Draws uniform indices in [0, size) from a seeded xoroshiro128+ stream (pure-rand). */
export interface IndexDrawer {
	next(size: number): number;
}

export function createIndexDrawer(seed: number): IndexDrawer {
	const rng = xoroshiro128plus(seed);
	return { next: (size) => uniformInt(rng, 0, size - 1) };
}
