import { CalibrationInputError, type MagnitudeSystem, type Measured } from './types';

/**
 * The band catalogue: single photometric bands with stable ids, and Wesenheit combinations of them.
 * Ids are API-facing and never change.
 */

export const SINGLE_BAND_IDS = [
	'B',
	'V',
	'Rc',
	'Ic',
	'J',
	'H',
	'Ks',
	'G',
	'BP',
	'RP',
	'F555W',
	'F814W',
	'F160W',
	'IRAC36',
	'IRAC45'
] as const;
export type SingleBandId = (typeof SINGLE_BAND_IDS)[number];

export const WESENHEIT_BAND_IDS = ['W_VI', 'W_BI', 'W_JK', 'W_G', 'W_H'] as const;
export type WesenheitBandId = (typeof WESENHEIT_BAND_IDS)[number];

export type BandId = SingleBandId | WesenheitBandId;

export const PHOTOMETRIC_SYSTEMS = {
	johnson_cousins: 'Johnson–Cousins',
	'2mass': '2MASS',
	gaia: 'Gaia',
	hst_wfc3: 'HST WFC3',
	spitzer_irac: 'Spitzer IRAC'
} as const;
export type PhotometricSystemId = keyof typeof PHOTOMETRIC_SYSTEMS;

export interface SingleBandDefinition {
	kind: 'single';
	id: SingleBandId;
	label: string;
	photometricSystem: PhotometricSystemId;
	/** Effective wavelength (µm) at which extinction laws are evaluated for this band. */
	effectiveWavelengthMicron: number;
	/** Where the wavelength comes from. */
	wavelengthSource: string;
	/** Magnitude system of the catalogue's convention for this band; a relation records its own. */
	magnitudeSystem: MagnitudeSystem;
	/** So wide that a single-band extinction depends on the star's colour. */
	broad?: boolean;
}

/** W = m1 − R·(m2 − m3) (Madore 1982, ApJ 253, 575), m1 = magnitudeBand, [m2, m3] = colourBands. */
export interface WesenheitBandDefinition {
	kind: 'wesenheit';
	id: WesenheitBandId;
	label: string;
	magnitudeBand: SingleBandId;
	/** [blue, red]. */
	colourBands: readonly [SingleBandId, SingleBandId];
	/** Conventional R = A1/(A2 − A3). */
	ratio: number;
	ratioSource: string;
}

export type BandDefinition = SingleBandDefinition | WesenheitBandDefinition;

const BESSELL_1998 =
	'Bessell, Castelli & Plez 1998, A&A 333, 231, Vega λ_eff, as listed in Fouqué et al. 2007, A&A 476, 73, Table 4';
const TWOMASS_2003 =
	'Cohen, Wheaton & Megeath 2003, AJ 126, 1090, isophotal λ, as listed in Fouqué et al. 2007, A&A 476, 73, Table 4';
const GAIA_2021 = 'Riello et al. 2021, A&A 649, A3, pivot wavelength (from memory)';
const WFC3_HANDBOOK = 'WFC3 Instrument Handbook, pivot wavelength (from memory)';
const IRAC_2004 = 'Fazio et al. 2004, ApJS 154, 10, nominal wavelength (from memory)';

function single(
	id: SingleBandId,
	label: string,
	photometricSystem: PhotometricSystemId,
	effectiveWavelengthMicron: number,
	wavelengthSource: string,
	broad = false
): SingleBandDefinition {
	return {
		kind: 'single',
		id,
		label,
		photometricSystem,
		effectiveWavelengthMicron,
		wavelengthSource,
		magnitudeSystem: 'Vega',
		...(broad ? { broad: true } : {})
	};
}

function wesenheit(
	id: WesenheitBandId,
	label: string,
	magnitudeBand: SingleBandId,
	colourBands: readonly [SingleBandId, SingleBandId],
	ratio: number,
	ratioSource: string
): WesenheitBandDefinition {
	return { kind: 'wesenheit', id, label, magnitudeBand, colourBands, ratio, ratioSource };
}

export const BANDS: Readonly<Record<BandId, BandDefinition>> = Object.freeze({
	B: single('B', 'B', 'johnson_cousins', 0.438, BESSELL_1998),
	V: single('V', 'V', 'johnson_cousins', 0.545, BESSELL_1998),
	Rc: single(
		'Rc',
		'R_C',
		'johnson_cousins',
		0.641,
		'Bessell, Castelli & Plez 1998, A&A 333, 231, Vega λ_eff (from memory)'
	),
	Ic: single('Ic', 'I_C', 'johnson_cousins', 0.798, BESSELL_1998),
	J: single('J', 'J', '2mass', 1.235, TWOMASS_2003),
	H: single('H', 'H', '2mass', 1.662, TWOMASS_2003),
	Ks: single('Ks', 'K_s', '2mass', 2.159, TWOMASS_2003),
	G: single('G', 'G', 'gaia', 0.622, GAIA_2021, true),
	BP: single('BP', 'G_BP', 'gaia', 0.511, GAIA_2021, true),
	RP: single('RP', 'G_RP', 'gaia', 0.777, GAIA_2021, true),
	F555W: single('F555W', 'F555W', 'hst_wfc3', 0.5308, WFC3_HANDBOOK),
	F814W: single('F814W', 'F814W', 'hst_wfc3', 0.8048, WFC3_HANDBOOK),
	F160W: single('F160W', 'F160W', 'hst_wfc3', 1.5369, WFC3_HANDBOOK),
	IRAC36: single('IRAC36', '[3.6]', 'spitzer_irac', 3.55, IRAC_2004),
	IRAC45: single('IRAC45', '[4.5]', 'spitzer_irac', 4.493, IRAC_2004),
	W_VI: wesenheit(
		'W_VI',
		'W_VI = I_C − 1.55 (V − I_C)',
		'Ic',
		['V', 'Ic'],
		1.55,
		'OGLE convention (Udalski et al. 1999, AcA 49, 201; Soszyński et al. 2008, AcA 58, 163), from memory'
	),
	W_BI: wesenheit(
		'W_BI',
		'W_BI = I_C − 0.866 (B − I_C)',
		'Ic',
		['B', 'Ic'],
		0.866,
		'A_I/(A_B − A_I) from Fouqué et al. 2007, A&A 476, 73, Table 4 (0.608/(1.31 − 0.608))'
	),
	W_JK: wesenheit(
		'W_JK',
		'W_JK = K_s − 0.69 (J − K_s)',
		'Ks',
		['J', 'Ks'],
		0.69,
		'Inno et al. 2013, ApJ 764, 84 (from memory)'
	),
	W_G: wesenheit(
		'W_G',
		'W_G = G − 1.90 (G_BP − G_RP)',
		'G',
		['BP', 'RP'],
		1.9,
		'Ripepi et al. 2019, A&A 625, A14 (from memory)'
	),
	W_H: wesenheit(
		'W_H',
		'W_H = F160W − 0.386 (F555W − F814W)',
		'F160W',
		['F555W', 'F814W'],
		0.386,
		'Riess et al. 2016, ApJ 826, 56, from Fitzpatrick 1999 with R_V = 3.3 (from memory)'
	)
});

/** Thrown for a band id the catalogue does not hold; `code` is stable. */
export class UnknownBandError extends Error {
	readonly code = 'unknown_band';
	readonly bandId: string;
	constructor(bandId: string) {
		super(`unknown band '${bandId}'; known bands: ${[...SINGLE_BAND_IDS, ...WESENHEIT_BAND_IDS].join(', ')}`);
		this.name = 'UnknownBandError';
		this.bandId = bandId;
	}
}

export function isBandId(id: string): id is BandId {
	return Object.hasOwn(BANDS, id);
}

export function isSingleBandId(id: string): id is SingleBandId {
	return isBandId(id) && BANDS[id].kind === 'single';
}

export function isWesenheitBandId(id: string): id is WesenheitBandId {
	return isBandId(id) && BANDS[id].kind === 'wesenheit';
}

export function getBand(id: string): BandDefinition {
	if (!isBandId(id)) throw new UnknownBandError(id);
	return BANDS[id];
}

function getWesenheitBand(band: WesenheitBandId | WesenheitBandDefinition): WesenheitBandDefinition {
	if (typeof band !== 'string') return band;
	const definition = getBand(band);
	if (definition.kind !== 'wesenheit') {
		throw new CalibrationInputError([
			{ star: null, field: 'band', message: `'${band}' is a single band, not a Wesenheit band` }
		]);
	}
	return definition;
}

/**
 * The weights c_b of W = Σ c_b·m_b for W = m1 − R·(m2 − m3), merging a band that appears twice
 * (W_VI = (1 + R)·I − R·V).
 */
export function wesenheitWeights(
	band: WesenheitBandId | WesenheitBandDefinition,
	ratio?: number
): Partial<Record<SingleBandId, number>> {
	const definition = getWesenheitBand(band);
	const r = ratio ?? definition.ratio;
	const [blue, red] = definition.colourBands;
	const weights: Partial<Record<SingleBandId, number>> = {};
	const add = (id: SingleBandId, weight: number) => {
		weights[id] = (weights[id] ?? 0) + weight;
	};
	add(definition.magnitudeBand, 1);
	add(blue, -r);
	add(red, r);
	return weights;
}

function requireComponents<T>(
	definition: WesenheitBandDefinition,
	values: Partial<Record<string, T>>,
	isValid: (value: T) => boolean,
	what: string
): void {
	const needed = [...new Set([definition.magnitudeBand, ...definition.colourBands])];
	const issues = needed
		.filter((id) => values[id] === undefined || !isValid(values[id] as T))
		.map((id) => ({ star: null, field: id, message: `${definition.id} needs a finite ${what} in ${id}` }));
	if (issues.length > 0) throw new CalibrationInputError(issues);
}

/**
 * W = m1 − R·(m2 − m3) (Madore 1982, ApJ 253, 575). `ratio` overrides the catalogue's conventional R,
 * e.g. with one derived from an extinction law.
 */
export function wesenheitMagnitude(
	band: WesenheitBandId | WesenheitBandDefinition,
	mags: Partial<Record<string, number>>,
	ratio?: number
): number {
	const definition = getWesenheitBand(band);
	requireComponents(definition, mags, Number.isFinite, 'magnitude');
	const r = ratio ?? definition.ratio;
	const [blue, red] = definition.colourBands;
	return (mags[definition.magnitudeBand] as number) - r * ((mags[blue] as number) - (mags[red] as number));
}

export interface WesenheitErrorOptions {
	ratio?: number;
	/** 1σ of R itself; adds (m2 − m3)²σ_R² (needs the magnitudes, not only their errors). */
	ratioError?: number;
}

/**
 * W with its 1σ error from independent component errors:
 * σ_W² = Σ_b c_b² σ_b² [+ (m2 − m3)² σ_R²], with the merged weights c_b of `wesenheitWeights`
 * (first-order propagation, common practice).
 */
export function wesenheitMeasured(
	band: WesenheitBandId | WesenheitBandDefinition,
	mags: Partial<Record<string, Measured>>,
	options: WesenheitErrorOptions = {}
): Measured {
	const definition = getWesenheitBand(band);
	requireComponents(
		definition,
		mags,
		(m) => Number.isFinite(m.value) && Number.isFinite(m.error) && m.error >= 0,
		'magnitude and non-negative error'
	);
	const values = Object.fromEntries(Object.entries(mags).map(([id, m]) => [id, m?.value]));
	const errors = Object.fromEntries(Object.entries(mags).map(([id, m]) => [id, m?.error]));
	const value = wesenheitMagnitude(definition, values, options.ratio);
	let variance = wesenheitError(definition, errors, options.ratio) ** 2;
	if (options.ratioError !== undefined) {
		const [blue, red] = definition.colourBands;
		const colour = (values[blue] as number) - (values[red] as number);
		variance += colour ** 2 * options.ratioError ** 2;
	}
	return { value, error: Math.sqrt(variance) };
}

/** σ_W = √(Σ_b c_b² σ_b²) from independent component errors σ_b (see `wesenheitMeasured`). */
export function wesenheitError(
	band: WesenheitBandId | WesenheitBandDefinition,
	errors: Partial<Record<string, number>>,
	ratio?: number
): number {
	const definition = getWesenheitBand(band);
	requireComponents(definition, errors, (e) => Number.isFinite(e) && e >= 0, 'non-negative error');
	let variance = 0;
	for (const [id, weight] of Object.entries(wesenheitWeights(definition, ratio))) {
		variance += (weight as number) ** 2 * (errors[id] as number) ** 2;
	}
	return Math.sqrt(variance);
}
