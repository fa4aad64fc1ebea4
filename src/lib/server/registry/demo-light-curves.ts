import type { EntityManager } from '@mikro-orm/postgresql';
import { runLightCurveJob } from '../light-curves/jobs';
import { uploadLightCurves } from '../light-curves/uploads';
import type { ObjectStorage } from '../storage/object-storage';
import type { Actor } from './actor';
import { createCalibratorSet, storeRevision } from './calibrator-sets';
import { uniformStream } from './demo-noise';

/**
 * The invented light-curve part of the demo: V and Ic time series of a dozen invented Lantern Cloud
 * Cepheids, analysed, and a calibrator set whose first revision takes each star's period and
 * intensity-mean magnitudes from those analyses. Not real data.
 */
export const DEMO_LIGHT_CURVE_SET = 'kestrel-lantern-light-curve-sample';
const LANTERN_MU = 18.48;
const STARS = 12;

// Period–luminosity relations typical of published V and I relations (from memory), rounded: the demo
// only needs curves that look like Cepheids.
const ABSOLUTE = {
	V: (logPeriod: number) => -4.05 - 2.76 * (logPeriod - 1),
	Ic: (logPeriod: number) => -4.8 - 2.96 * (logPeriod - 1)
} as const;
const SEMI_AMPLITUDE = { V: 0.34, Ic: 0.2 } as const;

export interface InventedCurveStar {
	star: string;
	periodDays: number;
}

export function inventedCurveStars(): InventedCurveStar[] {
	return Array.from({ length: STARS }, (_, i) => ({
		star: `Invented LC-LCV-${String(i + 1).padStart(3, '0')}`,
		periodDays: Number((10 ** (0.45 + (1.05 * i) / (STARS - 1))).toFixed(4))
	}));
}

/** Sawtooth-like curves (a fundamental and its first harmonic), 70 nights over two seasons, 0.012 mag noise. */
export function inventedLightCurveCsv(stars = inventedCurveStars()): string {
	const uniform = uniformStream(2026);
	const noise = () => uniform() - 0.5;
	const lines = ['star,band,time,magnitude,error'];
	for (const { star, periodDays } of stars) {
		const logPeriod = Math.log10(periodDays);
		for (const band of ['V', 'Ic'] as const) {
			const mean = ABSOLUTE[band](logPeriod) + LANTERN_MU;
			for (let night = 0; night < 70; night++) {
				const t = 61_000 + (night < 35 ? night * 4.3 : 240 + night * 3.7) + 0.3 * noise();
				const phase = (2 * Math.PI * t) / periodDays;
				const shape = Math.sin(phase) + 0.35 * Math.sin(2 * phase + 0.8);
				const magnitude = mean + SEMI_AMPLITUDE[band] * shape + 0.024 * noise();
				lines.push(`${star},${band},${t.toFixed(5)},${magnitude.toFixed(4)},0.012`);
			}
		}
	}
	return lines.join('\n') + '\n';
}

/** Uploads and analyses the invented light curves, then makes the set and its revision from them. */
export async function seedLightCurveDemo(
	fork: () => EntityManager,
	storage: ObjectStorage,
	curator: Actor,
	groupSlug: string
): Promise<void> {
	const upload = await uploadLightCurves(
		fork(),
		storage,
		curator,
		{
			bytes: new TextEncoder().encode(inventedLightCurveCsv()),
			mediaType: 'text/csv',
			fileName: 'lantern-light-curves.csv',
			timeReference: 'MJD',
			timeOffsetDays: '0',
			mapping: {},
			star: null,
			band: null,
			population: 'classical_fundamental'
		},
		// The seed analyses the upload itself, below, rather than waiting for a worker.
		{ enqueueLightCurves: async () => null }
	);
	await runLightCurveJob(fork(), upload.analysisJob!.id, () => storage);

	await createCalibratorSet(fork(), curator, {
		slug: DEMO_LIGHT_CURVE_SET,
		title: 'Lantern Cloud Cepheids from light curves (invented)',
		description:
			'Invented Lantern Cloud Cepheids whose periods and V and Ic intensity means come from their own invented light curves. Not real data.',
		group: groupSlug,
		licence: 'CC0-1.0',
		citations: ['Kestrel Cepheid Survey (invented), Demo Light Curves, 2026.']
	});
	const table = [
		'star,population,period_days,mu_host,mu_host_err,host,reference',
		...inventedCurveStars().map(
			({ star }) => `${star},classical_fundamental,,${LANTERN_MU},0.03,Lantern Cloud (invented),Invented for the demo`
		)
	].join('\n');
	await storeRevision(fork(), storage, curator, DEMO_LIGHT_CURVE_SET, {
		bytes: new TextEncoder().encode(table + '\n'),
		mediaType: 'text/csv',
		fileName: 'lantern-light-curve-stars.csv',
		mapping: {},
		note: 'Periods and intensity means from the invented light curves.',
		lightCurves: { upload: upload.id, fill: 'blank' }
	});
}
