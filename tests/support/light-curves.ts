/**
 * Invented light curves for tests (labelled as such): sinusoid-plus-harmonic Cepheid-like curves with
 * known periods, sampled unevenly over a few hundred days, in the shape an upload or analyse request takes.
 */
export interface InventedStar {
	star: string;
	periodDays: number;
	meanMag: number;
}

export const INVENTED_STARS: InventedStar[] = [
	{ star: 'KCS-LC-001', periodDays: 3.3, meanMag: 15.2 },
	{ star: 'KCS-LC-002', periodDays: 5.1, meanMag: 14.7 },
	{ star: 'KCS-LC-003', periodDays: 7.7, meanMag: 14.1 }
];

/** Points [t, mag, err] of an invented star in a band, deterministic (no random numbers). */
export function inventedPoints(star: InventedStar, band: 'V' | 'Ic', count = 120): [number, number, number][] {
	const amplitude = band === 'V' ? 0.35 : 0.2;
	return Array.from({ length: count }, (_, i) => {
		const hashed = Math.sin(i * 12.9898 + 78.233) * 43758.5453;
		const t = 5000 + 400 * (hashed - Math.floor(hashed));
		const phase = (2 * Math.PI * t) / star.periodDays;
		const mag =
			star.meanMag + (band === 'V' ? 0.6 : 0) + amplitude * Math.sin(phase) + 0.3 * amplitude * Math.sin(2 * phase + 1);
		return [Number(t.toFixed(5)), Number((mag + 0.004 * Math.sin(7.31 * i)).toFixed(4)), 0.01];
	});
}

/** A CSV with a star and a band column: every invented star in V and Ic. */
export function inventedUploadCsv(stars = INVENTED_STARS, count = 120): string {
	const lines = ['star,band,time,magnitude,error'];
	for (const star of stars) {
		for (const band of ['V', 'Ic'] as const) {
			for (const [t, mag, err] of inventedPoints(star, band, count))
				lines.push(`${star.star},${band},${t},${mag},${err}`);
		}
	}
	return lines.join('\n') + '\n';
}
