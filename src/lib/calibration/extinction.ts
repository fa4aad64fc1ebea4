import { BANDS, getBand, type SingleBandDefinition, type SingleBandId, type WesenheitBandId } from './bands';
import { CCM89_X_MAX, CCM89_X_MIN, ccm89 } from './extinction-laws/ccm89';
import { fitzpatrick99 } from './extinction-laws/fitzpatrick99';
import { odonnell94 } from './extinction-laws/odonnell94';
import { CalibrationInputError, EXTINCTION_LAW_IDS, type ExtinctionLawId } from './types';

/**
 * Interstellar extinction laws and their application to the band catalogue:
 * A_λ = (A_λ/A_V)·R_V·E(B − V), with A_λ/A_V from the chosen law evaluated at the band's effective wavelength.
 */

/** Common practice for the diffuse Galactic interstellar medium. */
export const DEFAULT_RV = 3.1;

export interface ExtinctionLawInfo {
	id: ExtinctionLawId;
	label: string;
	reference: string;
	/** The law is evaluated only for xMin ≤ x ≤ xMax, x = 1/λ in µm⁻¹. */
	xMinInvMicron: number;
	xMaxInvMicron: number;
	note: string;
}

export const EXTINCTION_LAWS: Readonly<Record<ExtinctionLawId, ExtinctionLawInfo>> = Object.freeze({
	ccm89: {
		id: 'ccm89',
		label: 'Cardelli, Clayton & Mathis (1989)',
		reference: 'Cardelli, Clayton & Mathis 1989, ApJ 345, 245',
		xMinInvMicron: CCM89_X_MIN,
		xMaxInvMicron: CCM89_X_MAX,
		note: 'A/A_V = a(x) + b(x)/R_V in four pieces: IR, optical/NIR, UV, far-UV.'
	},
	odonnell94: {
		id: 'odonnell94',
		label: "O'Donnell (1994)",
		reference: "O'Donnell 1994, ApJ 422, 158",
		xMinInvMicron: CCM89_X_MIN,
		xMaxInvMicron: CCM89_X_MAX,
		note: 'CCM89 with a new optical/NIR polynomial for 1.1 ≤ x ≤ 3.3 µm⁻¹.'
	},
	fitzpatrick99: {
		id: 'fitzpatrick99',
		label: 'Fitzpatrick (1999)',
		reference: 'Fitzpatrick 1999, PASP 111, 63',
		xMinInvMicron: 0.3,
		xMaxInvMicron: 10,
		note:
			'Natural cubic spline through R_V-dependent optical/IR knots, Fitzpatrick & Massa UV curve above 2700 Å. ' +
			'Below x = 0.3 µm⁻¹ the spline only bends towards its formal anchor A = 0 at x = 0, beyond the longest ' +
			'measured knot (2.65 µm), so it is not offered there.'
	}
});

export interface MidInfraredRatioTable {
	id: string;
	label: string;
	source: string;
	/** A_λ/A_Ks: applied as (A_λ/A_Ks)·(A_Ks/A_V from the chosen law). */
	perKs: Partial<Record<SingleBandId, number>>;
}

/** Published mid-infrared extinction ratios, for bands that lie beyond the optical/near-IR laws. */
export const MID_INFRARED_RATIOS = Object.freeze({
	indebetouw05: {
		id: 'indebetouw05',
		label: 'Indebetouw et al. (2005)',
		source: 'Indebetouw et al. 2005, ApJ 619, 931, A_λ/A_K for IRAC (from memory)',
		perKs: { IRAC36: 0.56, IRAC45: 0.43 }
	},
	wangchen19: {
		id: 'wangchen19',
		label: 'Wang & Chen (2019)',
		source:
			'Wang & Chen 2019, ApJ 877, 116: A_λ/A_V = 0.037 ([3.6]), 0.026 ([4.5]) over A_Ks/A_V = 0.078 (from memory)',
		perKs: { IRAC36: 0.474, IRAC45: 0.333 }
	}
} satisfies Record<string, MidInfraredRatioTable>);
export type MidInfraredRatioId = keyof typeof MID_INFRARED_RATIOS;

export type ExtinctionRefusalCode =
	| 'outside_law_range'
	| 'colour_dependent_broad_band'
	| 'reddening_free_band'
	| 'unknown_mid_infrared_ratio'
	| 'band_not_in_mid_infrared_ratio';

/** The law cannot honestly give an extinction for this band or wavelength. `code` is stable. */
export class ExtinctionNotApplicableError extends Error {
	readonly code: ExtinctionRefusalCode;
	readonly law: ExtinctionLawId;
	readonly bandId: string | null;
	readonly details: Record<string, number | string | null>;
	constructor(
		code: ExtinctionRefusalCode,
		message: string,
		law: ExtinctionLawId,
		bandId: string | null,
		details: Record<string, number | string | null> = {}
	) {
		super(message);
		this.name = 'ExtinctionNotApplicableError';
		this.code = code;
		this.law = law;
		this.bandId = bandId;
		this.details = details;
	}
}

export interface BandExtinctionOptions {
	/** For bands outside the law's range (IRAC): which published A_λ/A_Ks table to scale by the law's A_Ks/A_V. */
	midInfraredRatio?: MidInfraredRatioId;
}

const LAW_CURVES: Record<ExtinctionLawId, (x: number, rV: number) => number> = {
	ccm89,
	odonnell94,
	fitzpatrick99
};

function checkLawAndRv(law: string, rV: number): asserts law is ExtinctionLawId {
	const issues = [];
	if (!(EXTINCTION_LAW_IDS as readonly string[]).includes(law)) {
		issues.push({
			star: null,
			field: 'law',
			message: `unknown extinction law '${law}' (${EXTINCTION_LAW_IDS.join(', ')})`
		});
	}
	if (!Number.isFinite(rV) || rV <= 0) {
		issues.push({ star: null, field: 'rV', message: `R_V must be a positive number, got ${rV}` });
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);
}

function isInRange(law: ExtinctionLawId, x: number): boolean {
	const info = EXTINCTION_LAWS[law];
	return x >= info.xMinInvMicron && x <= info.xMaxInvMicron;
}

function rangeText(law: ExtinctionLawId): string {
	const info = EXTINCTION_LAWS[law];
	return `${info.xMinInvMicron} ≤ x ≤ ${info.xMaxInvMicron} µm⁻¹`;
}

/** A_λ/A_V of `law` at x = 1/λ (µm⁻¹); refuses x outside the law's range. */
export function extinctionCurve(law: ExtinctionLawId, xInvMicron: number, rV: number = DEFAULT_RV): number {
	checkLawAndRv(law, rV);
	if (!Number.isFinite(xInvMicron)) {
		throw new CalibrationInputError([
			{ star: null, field: 'x', message: `x must be a finite number, got ${xInvMicron}` }
		]);
	}
	if (!isInRange(law, xInvMicron)) {
		throw new ExtinctionNotApplicableError(
			'outside_law_range',
			`${EXTINCTION_LAWS[law].label} covers ${rangeText(law)}; x = ${xInvMicron} µm⁻¹ is outside it`,
			law,
			null,
			{
				xInvMicron,
				xMinInvMicron: EXTINCTION_LAWS[law].xMinInvMicron,
				xMaxInvMicron: EXTINCTION_LAWS[law].xMaxInvMicron
			}
		);
	}
	return LAW_CURVES[law](xInvMicron, rV);
}

function singleBandFor(law: ExtinctionLawId, bandId: string): SingleBandDefinition {
	const band = getBand(bandId);
	if (band.kind === 'wesenheit') {
		throw new ExtinctionNotApplicableError(
			'reddening_free_band',
			`${band.id} is a Wesenheit magnitude, reddening-free by construction; no extinction correction applies`,
			law,
			band.id
		);
	}
	if (band.broad) {
		throw new ExtinctionNotApplicableError(
			'colour_dependent_broad_band',
			`${band.label} is so broad that its extinction depends on the star's colour (and on the extinction itself), ` +
				'so a single ratio at one wavelength would be wrong; use the reddening-free Wesenheit W_G instead',
			law,
			band.id
		);
	}
	return band;
}

function midInfraredRatio(
	law: ExtinctionLawId,
	band: SingleBandDefinition,
	rV: number,
	x: number,
	tableId: string
): number {
	if (!Object.hasOwn(MID_INFRARED_RATIOS, tableId)) {
		throw new ExtinctionNotApplicableError(
			'unknown_mid_infrared_ratio',
			`unknown mid-infrared ratio '${tableId}' (${Object.keys(MID_INFRARED_RATIOS).join(', ')})`,
			law,
			band.id,
			{ midInfraredRatio: tableId }
		);
	}
	const table: MidInfraredRatioTable = MID_INFRARED_RATIOS[tableId as MidInfraredRatioId];
	const perKs = table.perKs[band.id];
	if (perKs === undefined) {
		throw new ExtinctionNotApplicableError(
			'band_not_in_mid_infrared_ratio',
			`${table.label} gives no ratio for ${band.label} (x = ${x.toFixed(3)} µm⁻¹)`,
			law,
			band.id,
			{ midInfraredRatio: tableId, xInvMicron: x }
		);
	}
	const ks = BANDS.Ks as SingleBandDefinition;
	return perKs * LAW_CURVES[law](1 / ks.effectiveWavelengthMicron, rV);
}

/**
 * A_λ/A_V for a single band: the law at x = 1/λ_eff. Bands beyond the law's range are refused unless
 * `options.midInfraredRatio` names a published A_λ/A_Ks table, then A_λ/A_V = (A_λ/A_Ks)·(A_Ks/A_V)_law.
 * Monochromatic at λ_eff, so V itself need not give exactly 1 (CCM89 and O'Donnell normalise at 0.549 µm).
 */
export function bandExtinctionRatio(
	law: ExtinctionLawId,
	bandId: string,
	rV: number = DEFAULT_RV,
	options: BandExtinctionOptions = {}
): number {
	checkLawAndRv(law, rV);
	const band = singleBandFor(law, bandId);
	const x = 1 / band.effectiveWavelengthMicron;
	if (isInRange(law, x)) return LAW_CURVES[law](x, rV);
	if (options.midInfraredRatio !== undefined) return midInfraredRatio(law, band, rV, x, options.midInfraredRatio);
	throw new ExtinctionNotApplicableError(
		'outside_law_range',
		`${band.label} (x = ${x.toFixed(3)} µm⁻¹) is outside ${EXTINCTION_LAWS[law].label}'s range ${rangeText(law)}; ` +
			`name a published mid-infrared ratio (${Object.keys(MID_INFRARED_RATIOS).join(', ')})`,
		law,
		band.id,
		{
			xInvMicron: x,
			xMinInvMicron: EXTINCTION_LAWS[law].xMinInvMicron,
			xMaxInvMicron: EXTINCTION_LAWS[law].xMaxInvMicron
		}
	);
}

/** R_λ = A_λ/E(B − V) = R_V·(A_λ/A_V). */
export function bandExtinctionPerEbv(
	law: ExtinctionLawId,
	bandId: string,
	rV: number = DEFAULT_RV,
	options: BandExtinctionOptions = {}
): number {
	return rV * bandExtinctionRatio(law, bandId, rV, options);
}

function checkEbv(ebv: number): void {
	if (!Number.isFinite(ebv)) {
		throw new CalibrationInputError([
			{ star: null, field: 'ebv', message: `E(B−V) must be a finite number, got ${ebv}` }
		]);
	}
}

/** A_λ = (A_λ/A_V)·R_V·E(B − V), in mag. */
export function bandExtinction(
	law: ExtinctionLawId,
	bandId: string,
	ebv: number,
	rV: number = DEFAULT_RV,
	options: BandExtinctionOptions = {}
): number {
	checkEbv(ebv);
	return bandExtinctionPerEbv(law, bandId, rV, options) * ebv;
}

/** E(m1 − m2) = A_1 − A_2 = (A_1/A_V − A_2/A_V)·R_V·E(B − V), in mag. */
export function colourExcess(
	law: ExtinctionLawId,
	band1: string,
	band2: string,
	ebv: number,
	rV: number = DEFAULT_RV,
	options: BandExtinctionOptions = {}
): number {
	checkEbv(ebv);
	return (bandExtinctionRatio(law, band1, rV, options) - bandExtinctionRatio(law, band2, rV, options)) * rV * ebv;
}

/**
 * The Wesenheit ratio a law implies: R = A1/(A2 − A3) for W = m1 − R·(m2 − m3) (Madore 1982, ApJ 253, 575),
 * which makes W independent of E(B − V) under that law. Gaia's broad bands are refused.
 */
export function wesenheitRatioFromLaw(
	wesenheitId: WesenheitBandId,
	law: ExtinctionLawId,
	rV: number = DEFAULT_RV,
	options: BandExtinctionOptions = {}
): number {
	checkLawAndRv(law, rV);
	const band = getBand(wesenheitId);
	if (band.kind !== 'wesenheit') {
		throw new CalibrationInputError([
			{ star: null, field: 'band', message: `'${wesenheitId}' is not a Wesenheit band` }
		]);
	}
	const components = [band.magnitudeBand, ...band.colourBands];
	if (components.some((id) => (BANDS[id] as SingleBandDefinition).broad)) {
		throw new ExtinctionNotApplicableError(
			'colour_dependent_broad_band',
			`${band.id} combines broad bands whose extinction depends on the star's colour; its ratio cannot come ` +
				`from a law at one wavelength per band; the conventional R = ${band.ratio} (${band.ratioSource}) applies`,
			law,
			band.id
		);
	}
	const [a1, a2, a3] = components.map((id) => bandExtinctionRatio(law, id, rV, options));
	return a1 / (a2 - a3);
}
