import type { EntityManager } from '@mikro-orm/postgresql';
import { syntheticCalibrators, type PopulationId } from '../../calibration/index';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { Group, User } from '../entities/index';
import type { ObjectStorage } from '../storage/object-storage';
import type { Actor } from './actor';
import { createCalibratorSet, uploadRevision } from './calibrator-sets';
import { seedLightCurveDemo } from './demo-light-curves';
import { uniformStream } from './demo-noise';
import { requestFit } from './fits';
import { createProposal, editProposal, reviewProposal, submitProposal, withdrawProposal } from './proposals';
import { withoutRegistryMail } from './notifications';
import { createRelation } from './relations';
import { FitRequestSchema, type FitRequest } from './schemas';
import { deprecateVersion } from './versions';

/**
 * The invented registry demo: an invented survey's calibrator sets (an invented host galaxy and
 * invented Milky Way Cepheids), generated from realistic relations with realistic noise, several
 * relations with versions (one deprecated, one embargoed) and proposals in every state. Every name
 * says "(invented)"; none of it is real data.
 */
export const DEMO_MARKER_SET = 'kestrel-lantern-cloud-cepheids';
const INVENTED = 'Invented for the Candlebook demo';

interface TrueRelation {
	population: PopulationId;
	count: number;
	/** zero point at log P = 1, slope, intrinsic scatter, per band. */
	bands: Record<string, { zeroPoint: number; slope: number; scatter: number }>;
	logPeriodRange: [number, number];
	seed: number;
}

// Coefficients of the generating relations are typical of published Wesenheit relations (from memory),
// rounded; the demo only needs them to look like the real thing.
const LANTERN: TrueRelation[] = [
	{
		population: 'classical_fundamental',
		count: 60,
		bands: {
			W_VI: { zeroPoint: -5.95, slope: -3.31, scatter: 0.08 },
			W_JK: { zeroPoint: -5.99, slope: -3.28, scatter: 0.09 }
		},
		logPeriodRange: [0.4, 1.6],
		seed: 11
	},
	{
		population: 'classical_first_overtone',
		count: 24,
		bands: {
			W_VI: { zeroPoint: -6.47, slope: -3.41, scatter: 0.07 },
			W_JK: { zeroPoint: -6.5, slope: -3.38, scatter: 0.08 }
		},
		logPeriodRange: [0.0, 0.6],
		seed: 12
	},
	{
		population: 'type2_w_vir',
		count: 14,
		bands: {
			W_VI: { zeroPoint: -4.2, slope: -2.5, scatter: 0.12 },
			W_JK: { zeroPoint: -4.45, slope: -2.45, scatter: 0.12 }
		},
		logPeriodRange: [0.6, 1.3],
		seed: 13
	}
];
const LANTERN_MU = 18.48;

function gaussianStream(seed: number) {
	const uniform = uniformStream(seed);
	return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}

const round = (value: number, digits: number) => Number(value.toFixed(digits));

function lanternRows(): string[][] {
	const rows: string[][] = [];
	let crossId = 4_170_000_000_000_000_000n;
	for (const truth of LANTERN) {
		const [first, ...others] = Object.entries(truth.bands);
		const base = syntheticCalibrators(
			{ zeroPoint: first[1].zeroPoint, slope: first[1].slope, intrinsicScatter: first[1].scatter },
			{ count: truth.count, seed: truth.seed, logPeriodRange: truth.logPeriodRange, absMagErrRange: [0.02, 0.06] }
		);
		const noise = gaussianStream(truth.seed * 7919);
		base.forEach((point, index) => {
			const mags = [point.absMag + LANTERN_MU, point.absMagErr];
			for (const [, relation] of others) {
				const err = 0.02 + 0.03 * Math.abs(noise()) * 0.5;
				const truthMag = relation.zeroPoint + relation.slope * (point.logPeriod - 1);
				mags.push(truthMag + relation.scatter * noise() + err * noise() + LANTERN_MU, err);
			}
			crossId += 7919n;
			rows.push([
				`LC-${truth.population.startsWith('type2') ? 'T2' : truth.population.endsWith('overtone') ? 'O' : 'F'}-${String(index + 1).padStart(3, '0')} (invented)`,
				String(crossId),
				truth.population,
				String(round(10 ** point.logPeriod, 5)),
				...mags.map((value) => String(round(value, 3))),
				String(LANTERN_MU),
				'0.03',
				'Lantern Cloud (invented)',
				INVENTED
			]);
		});
	}
	return rows;
}

const LANTERN_HEADER = [
	'star',
	'cross_id',
	'population',
	'period_days',
	'mag_W_VI',
	'mag_err_W_VI',
	'mag_W_JK',
	'mag_err_W_JK',
	'mu_host',
	'mu_host_err',
	'host',
	'reference'
];

function galacticRows(): string[][] {
	const wg = syntheticCalibrators(
		{ zeroPoint: -5.98, slope: -3.28, intrinsicScatter: 0.07 },
		{ count: 45, seed: 21, logPeriodRange: [0.45, 1.55], absMagErrRange: [0.01, 0.03] }
	);
	const noise = gaussianStream(4242);
	return wg.map((point, index) => {
		const distanceKpc = 0.35 + 2.6 * Math.abs(Math.sin(index * 12.9898));
		const parallaxErr = 0.015 + 0.01 * Math.abs(noise());
		const parallax = 1 / distanceKpc + parallaxErr * noise();
		const mu = 5 * Math.log10(distanceKpc * 1000) - 5;
		const whTruth = -5.9 - 3.26 * (point.logPeriod - 1);
		return [
			`MW-${String(index + 1).padStart(3, '0')} (invented)`,
			String(5_300_000_000_000_000_000n + BigInt(index) * 104_729n),
			'classical_fundamental',
			String(round(10 ** point.logPeriod, 5)),
			String(round(point.absMag + mu, 3)),
			String(round(point.absMagErr, 3)),
			String(round(whTruth + 0.08 * noise() + mu, 3)),
			'0.02',
			String(round(parallax, 4)),
			String(round(parallaxErr, 4)),
			String(round(0.05 + 0.1 * noise(), 2)),
			'0.05',
			INVENTED
		];
	});
}

const GALACTIC_HEADER = [
	'star',
	'cross_id',
	'population',
	'period_days',
	'mag_W_G',
	'mag_err_W_G',
	'mag_W_H',
	'mag_err_W_H',
	'parallax_mas',
	'parallax_err_mas',
	'feh',
	'feh_err',
	'reference'
];

const csvOf = (header: string[], rows: string[][]) => [header, ...rows].map((row) => row.join(',')).join('\n') + '\n';

function fitRequest(fields: Record<string, unknown>): FitRequest {
	return FitRequestSchema.parse(fields);
}

/** Loads the registry demo once (sending no mail); returns false when it is there already. */
export function seedDemoRegistry(
	em: EntityManager,
	storage: ObjectStorage,
	people: { curator: string; reviewer: string },
	groupSlug: string
): Promise<boolean> {
	return withoutRegistryMail(() => seed(em, storage, people, groupSlug));
}

async function seed(
	em: EntityManager,
	storage: ObjectStorage,
	people: { curator: string; reviewer: string },
	groupSlug: string
): Promise<boolean> {
	if (await em.count(CalibratorSet, { slug: DEMO_MARKER_SET })) return false;
	if (!(await em.count(Group, { slug: groupSlug }))) return false;
	const actorFor = async (email: string): Promise<Actor> => {
		const user = await em.findOneOrFail(User, { email });
		return { id: user.id, displayName: user.displayName, roles: user.roles };
	};
	const curator = await actorFor(people.curator);
	const reviewer = await actorFor(people.reviewer);
	const fork = () => em.fork();

	// Calibrator sets.
	await createCalibratorSet(fork(), curator, {
		slug: DEMO_MARKER_SET,
		title: 'Lantern Cloud Cepheids (invented)',
		description:
			'Invented Cepheids in the invented Lantern Cloud galaxy at an invented geometric distance modulus of 18.48 ± 0.03 mag. Generated for the demo; not real data.',
		group: groupSlug,
		licence: 'CC0-1.0',
		citations: ['Kestrel Cepheid Survey (invented), Demo Data Release 1, 2026.']
	});
	const lantern = lanternRows();
	const upload = (slug: string, text: string, fileName: string, note: string) =>
		uploadRevision(fork(), storage, curator, slug, {
			bytes: new TextEncoder().encode(text),
			mediaType: 'text/csv',
			fileName,
			mapping: {},
			note,
			// Parallaxes are kept as measured, as a parallax-space fit wants them.
			keepNonPositiveParallax: true
		});
	await upload(DEMO_MARKER_SET, csvOf(LANTERN_HEADER, lantern), 'lantern-dr1.csv', 'First invented release.');
	const revised = lantern.map((row) => [...row]);
	revised[3][0] = 'LC-F-004b (invented)';
	revised[7][4] = String(round(Number(revised[7][4]) + 0.04, 3));
	revised.splice(20, 1);
	const extra = lanternRows()
		.slice(0, 3)
		.map((row, i) => {
			const copy = [...row];
			copy[0] = `LC-F-1${String(i).padStart(2, '0')} (invented)`;
			copy[1] = String(4_180_000_000_000_000_000n + BigInt(i));
			copy[4] = String(round(Number(copy[4]) + 0.05, 3));
			return copy;
		});
	await upload(
		DEMO_MARKER_SET,
		csvOf(LANTERN_HEADER, [...revised, ...extra]),
		'lantern-dr2.csv',
		'Invented second release: one star renamed, one magnitude corrected, one star dropped, three added.'
	);

	await createCalibratorSet(fork(), curator, {
		slug: 'kestrel-milky-way-parallaxes',
		title: 'Milky Way Cepheids with parallaxes (invented)',
		description: 'Invented Galactic Cepheids with invented parallaxes and Wesenheit magnitudes. Not real data.',
		group: groupSlug,
		licence: 'CC0-1.0',
		citations: ['Kestrel Cepheid Survey (invented), Demo Parallax Sample, 2026.']
	});
	await upload('kestrel-milky-way-parallaxes', csvOf(GALACTIC_HEADER, galacticRows()), 'mw-parallaxes.csv', '');
	await seedLightCurveDemo(fork, storage, curator, groupSlug);

	// Relations.
	const relation = (
		slug: string,
		title: string,
		band: string,
		population: PopulationId,
		anchorType: 'parallax' | 'geometric_host',
		visibility: 'public' | 'group' = 'public'
	) =>
		createRelation(fork(), curator, {
			slug,
			title,
			description: `${title}. Invented for the demo.`,
			band,
			population,
			anchorType,
			group: groupSlug,
			visibility,
			requiredApprovals: 1,
			magnitudeSystem: null
		});
	await relation(
		'kestrel-lantern-w-vi',
		'Lantern Cloud W_VI, fundamental mode (invented)',
		'W_VI',
		'classical_fundamental',
		'geometric_host'
	);
	await relation(
		'kestrel-lantern-overtone-w-vi',
		'Lantern Cloud W_VI, first overtone (invented)',
		'W_VI',
		'classical_first_overtone',
		'geometric_host'
	);
	await relation(
		'kestrel-galactic-w-g',
		'Milky Way Gaia W_G from parallaxes (invented)',
		'W_G',
		'classical_fundamental',
		'parallax'
	);
	await relation(
		'kestrel-galactic-w-h',
		'Milky Way HST W_H from parallaxes (invented)',
		'W_H',
		'classical_fundamental',
		'parallax'
	);
	await relation(
		'kestrel-lantern-weighted-w-vi',
		'Lantern Cloud W_VI, weighted fit with its error budget (invented)',
		'W_VI',
		'classical_fundamental',
		'geometric_host'
	);
	await relation(
		'kestrel-lantern-w-vir-w-jk',
		'Lantern Cloud W Virginis stars, W_JK (invented)',
		'W_JK',
		'type2_w_vir',
		'geometric_host',
		'group'
	);

	const fit = async (fields: Record<string, unknown>) =>
		(await requestFit(fork(), curator, fitRequest(fields), null)).job.id;
	const lanternFit = (
		revision: number,
		band: string,
		population: PopulationId,
		extraFields: Record<string, unknown> = {}
	) =>
		fit({
			calibrator_set: DEMO_MARKER_SET,
			revision,
			band,
			population,
			anchor: 'host',
			method: 'ml_scatter',
			clipping: { sigma: 3, max_iterations: 5 },
			...extraFields
		});
	const galacticFit = (band: string, extraFields: Record<string, unknown> = {}) =>
		fit({
			calibrator_set: 'kestrel-milky-way-parallaxes',
			revision: 1,
			band,
			population: 'classical_fundamental',
			anchor: 'parallax',
			method: 'wls',
			...extraFields
		});

	const approved = async (
		slug: string,
		fitId: string,
		title: string,
		rationale: string,
		embargoUntil: Date | null = null
	) => {
		const proposal = await createProposal(fork(), curator, slug, {
			fit: fitId,
			title,
			rationale,
			embargoUntil,
			submit: true
		});
		await reviewProposal(fork(), reviewer, proposal.id, 'approve', 'Checked against the residuals; fine for the demo.');
		return proposal;
	};

	// kestrel-lantern-w-vi: two versions, and open proposals in review, rejected and withdrawn.
	await approved(
		'kestrel-lantern-w-vi',
		await lanternFit(1, 'W_VI', 'classical_fundamental', { method: 'ols' }),
		'First calibration from DR1',
		'Ordinary least squares on the **invented** DR1 sample.'
	);
	await approved(
		'kestrel-lantern-w-vi',
		await lanternFit(2, 'W_VI', 'classical_fundamental'),
		'Refit on DR2 with intrinsic scatter',
		'Maximum-likelihood σ_int on the invented DR2 sample, 3σ clipping.'
	);
	const inReview = await createProposal(fork(), curator, 'kestrel-lantern-w-vi', {
		fit: await lanternFit(2, 'W_VI', 'classical_fundamental', { bootstrap: { resamples: 100, seed: 20261201 } }),
		title: 'Add bootstrap intervals',
		rationale: 'Same fit as version 2 with a seeded bootstrap (100 resamples) for percentile intervals.',
		embargoUntil: null,
		submit: true
	});
	await reviewProposal(fork(), reviewer, inReview.id, 'request_changes', 'Please say why 100 resamples are enough.');
	await editProposal(fork(), curator, inReview.id, {
		rationale:
			'Same fit as version 2 with a seeded bootstrap (100 resamples); the intervals are stable to 0.002 mag beyond 80 resamples (invented check).'
	});
	await submitProposal(fork(), curator, inReview.id);
	const rejected = await createProposal(fork(), curator, 'kestrel-lantern-w-vi', {
		fit: await lanternFit(2, 'W_VI', 'classical_fundamental', { method: 'ols', clipping: null }),
		title: 'Drop clipping',
		rationale: 'Try the fit without σ-clipping.',
		embargoUntil: null,
		submit: true
	});
	await reviewProposal(fork(), reviewer, rejected.id, 'reject', 'Unclipped outliers pull the slope; keep clipping.');
	const withdrawn = await createProposal(fork(), curator, 'kestrel-lantern-w-vi', {
		fit: await lanternFit(1, 'W_VI', 'classical_fundamental', { method: 'wls' }),
		title: 'Weighted fit on DR1',
		rationale: 'Superseded by the DR2 refit.',
		embargoUntil: null,
		submit: false
	});
	await withdrawProposal(fork(), curator, withdrawn.id);

	// kestrel-lantern-weighted-w-vi: a weighted fit without clipping, whose stated errors are too small for the
	// scatter: frozen with its χ²/dof verdict, its covariance scaled, and the Lantern Cloud distance as a shared
	// systematic; a fixed-slope proposal waits for review with the same warning and the slope's error as a term.
	await approved(
		'kestrel-lantern-weighted-w-vi',
		await lanternFit(2, 'W_VI', 'classical_fundamental', { method: 'wls', clipping: null }),
		'Weighted fit with its error budget',
		'Weighted least squares without clipping on the invented DR2. χ²/dof is far above 1, so the covariance is ' +
			'scaled by it; the Lantern Cloud distance (18.48 ± 0.03, invented) is frozen as a shared systematic.'
	);
	await createProposal(fork(), curator, 'kestrel-lantern-weighted-w-vi', {
		fit: await lanternFit(2, 'W_VI', 'classical_fundamental', {
			method: 'wls',
			clipping: null,
			fixed_slope: -3.3,
			fixed_slope_error: 0.05
		}),
		title: 'Adopt a fixed slope',
		rationale: 'Holds the slope at an invented −3.30 ± 0.05 mag/dex; its error becomes a systematic of the zero point.',
		embargoUntil: null,
		submit: true
	});

	// kestrel-lantern-overtone-w-vi: one embargoed version and a draft.
	const embargo = new Date(Date.now() + 180 * 24 * 3600 * 1000);
	await approved(
		'kestrel-lantern-overtone-w-vi',
		await lanternFit(2, 'W_VI', 'classical_first_overtone'),
		'First-overtone relation',
		'Overtone pulsators of the invented DR2, fitted on their own.',
		embargo
	);
	await createProposal(fork(), curator, 'kestrel-lantern-overtone-w-vi', {
		fit: await lanternFit(2, 'W_VI', 'classical_first_overtone', {
			period_filter: { log_period_min: 0.1, log_period_max: null }
		}),
		title: 'Cut the shortest periods',
		rationale: 'Draft: drop overtones below log P = 0.1.',
		embargoUntil: null,
		submit: false
	});

	// kestrel-galactic-w-g: version 2 is deprecated in favour of version 1; a proposal sent back.
	await approved(
		'kestrel-galactic-w-g',
		await galacticFit('W_G'),
		'Parallax calibration',
		'Weighted fit of the invented parallax sample.'
	);
	await approved(
		'kestrel-galactic-w-g',
		await galacticFit('W_G', { parallax_offset: { mode: 'given', value: 0.017, error: 0.005 } }),
		'Adopt a parallax offset',
		'Adopts an invented parallax zero-point offset.'
	);
	await deprecateVersion(fork(), reviewer, 'kestrel-galactic-w-g', 2, {
		reason: 'The invented parallax offset was applied with the wrong sign; use version 1.',
		successor: 1
	});
	const sentBack = await createProposal(fork(), curator, 'kestrel-galactic-w-g', {
		fit: await galacticFit('W_G', { parallax_offset: { mode: 'given', value: -0.017, error: 0.005 } }),
		title: 'Offset with the right sign',
		rationale: 'Re-applies the invented offset with the corrected sign.',
		embargoUntil: null,
		submit: true
	});
	await reviewProposal(fork(), reviewer, sentBack.id, 'request_changes', 'Add the offset’s source to the rationale.');

	// kestrel-galactic-w-h: a first proposal waiting for review.
	await createProposal(fork(), curator, 'kestrel-galactic-w-h', {
		fit: await galacticFit('W_H'),
		title: 'First W_H calibration',
		rationale: 'Weighted fit of the invented parallax sample in W_H.',
		embargoUntil: null,
		submit: true
	});

	// kestrel-lantern-w-vir-w-jk: group-private, one version.
	await approved(
		'kestrel-lantern-w-vir-w-jk',
		await lanternFit(2, 'W_JK', 'type2_w_vir'),
		'W Virginis relation',
		'Type II Cepheids of the invented DR2, W Virginis sub-class.'
	);
	return true;
}
