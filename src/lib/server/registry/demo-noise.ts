/** Seeded xorshift32 uniforms in (0, 1) for the invented demo data: plenty for invented noise. */
export function uniformStream(seed: number): () => number {
	let state = seed >>> 0 || 1;
	return () => {
		state ^= state << 13;
		state ^= state >>> 17;
		state ^= state << 5;
		return ((state >>> 0) + 0.5) / 4294967296;
	};
}
