/**
 * Preparation of calibrator rows into fit points for one band: population and period selection,
 * optional fundamentalisation, extinction, distance anchor and the per-star error budget.
 */
import { getBand, wesenheitMeasured, type BandDefinition } from './bands';
import { bandExtinctionPerEbv, DEFAULT_RV, type BandExtinctionOptions } from './extinction';
import type { CalibratorPoint } from './fit/types';
import { distanceModulusFromParallax, NO_PARALLAX_ZERO_POINT } from './parallax';
import type { ParallaxFitPoint } from './parallax-fit';
import {
	fundamentalisePeriod,
	isPopulationId,
	mixedPopulationWarning,
	periodWarnings,
	validityWarnings
} from './populations';
import type { CalibrationWarning, ExtinctionLawId, InputIssue, Measured, PopulationId, ValidityRange } from './types';
import { CalibrationInputError } from './types';

/** One calibrator as uploaded. Magnitudes are apparent, keyed by band id. */
export interface CalibratorRow {
	star: string;
	population: PopulationId;
	periodDays: number;
	periodErrDays?: number | null;
	mags: Partial<Record<string, Measured>>;
	/** Catalogue parallax, zero point not removed (mas). */
	parallaxMas?: number | null;
	parallaxErrMas?: number | null;
	/**
	 * The star's own catalogue zero point (mas), e.g. from the Lindegren et al. 2021 recipe computed outside
	 * Candlebook, removed before any adopted global one: ϖ_true = ϖ_obs − ZP_star − ZP_adopted. Its error is
	 * the star's own and adds to σ_ϖ in quadrature.
	 */
	parallaxZpCorrectionMas?: number | null;
	parallaxZpCorrectionErrMas?: number | null;
	/** Distance modulus of the star's host (galaxy or cluster). */
	muHost?: number | null;
	muHostErr?: number | null;
	/**
	 * Name of a host shared by several calibrators (e.g. 'LMC', a cluster). Stars naming the same host
	 * share one distance, whose error is then a systematic; without a name the distance is the star's own.
	 */
	host?: string | null;
	ebv?: number | null;
	ebvErr?: number | null;
	feh?: number | null;
	fehErr?: number | null;
}

export type AnchorKind = 'parallax' | 'host';

export interface PreparationOptions {
	bandId: string;
	anchor: AnchorKind;
	/** Adopted catalogue zero point (parallax anchor); default none. Never applied unless given. */
	parallaxZeroPoint?: Measured;
	/** A residual zero point is fitted later (parallax-space fit): no warning that none was adopted. */
	parallaxZeroPointFitted?: boolean;
	/** R of a Wesenheit band other than the catalogue's (see bands.ts); ignored for single bands. */
	wesenheitRatio?: number | null;
	/**
	 * Stars whose corrected parallax is not positive: refused with a CalibrationInputError (default), or
	 * kept for the parallax-space fit only, with a warning.
	 */
	nonPositiveParallax?: 'refuse' | 'parallax_space_only';
	/** Required to deredden a single band. */
	extinctionLaw?: ExtinctionLawId | null;
	rV?: number;
	extinctionOptions?: BandExtinctionOptions;
	/** Default: true for single bands; Wesenheit magnitudes are reddening-free and never dereddened. */
	deredden?: boolean;
	/** Keep only these populations; default all. */
	populations?: readonly PopulationId[];
	/** Keep only log10 P (after fundamentalisation) within [min, max]. */
	logPeriodRange?: { min: number; max: number } | null;
	/** Convert first-overtone periods to fundamental ones before the fit. */
	fundamentalise?: boolean;
	/** Warn for stars outside this range. */
	validity?: ValidityRange | null;
}

export interface StarPreparation {
	star: string;
	population: PopulationId;
	periodDays: number;
	/** Period entering the fit (fundamentalised or not), days. */
	fitPeriodDays: number;
	fundamentalised: boolean;
	logPeriod: number;
	logPeriodErr: number | null;
	/** Apparent magnitude in the band (for Wesenheit, W from its components unless given directly). */
	apparentMag: Measured;
	/** A_λ (mag), 0 when not dereddened. */
	extinction: number;
	/** (A_λ/E(B−V))·σ_E (mag). */
	extinctionErr: number;
	/** Distance modulus and its per-star error; null for a star kept only for the parallax-space fit. */
	distanceModulus: Measured | null;
	/** Error of the distance shared with other stars (zero-point or shared-host), not in absMagErr. */
	distanceSystematicErr: number;
	absMag: number | null;
	/** √(σ_m² + σ_A² + σ_μ²) with the per-star parts only. */
	absMagErr: number | null;
}

export interface ExcludedCalibrator {
	star: string;
	code: 'population_not_selected' | 'outside_period_range';
	message: string;
}

export interface SharedSystematic {
	kind: 'parallax_zero_point' | 'host_distance';
	/** Host name for a shared host distance; null for the parallax zero point. */
	host: string | null;
	value: number;
	error: number;
	stars: string[];
}

export interface PreparedCalibrators {
	bandId: string;
	anchor: AnchorKind;
	/** Absolute-magnitude points for the linear fits. */
	points: CalibratorPoint[];
	/** Parallax anchor only: points for the parallax-space fit (ZP not removed; the fit removes it). */
	parallaxPoints: ParallaxFitPoint[];
	stars: StarPreparation[];
	excluded: ExcludedCalibrator[];
	systematics: SharedSystematic[];
	warnings: CalibrationWarning[];
}

const isFiniteNumber = (value: unknown): value is number => typeof value === 'number' && Number.isFinite(value);
const isAbsent = (value: unknown) => value === null || value === undefined;

/** Checks the fields every row needs before it can be selected: name, population, period. */
function selectionIssues(row: CalibratorRow, index: number): InputIssue[] {
	const star = typeof row.star === 'string' && row.star !== '' ? row.star : `row ${index + 1}`;
	const issues: InputIssue[] = [];
	if (star !== row.star) issues.push({ star, field: 'star', message: 'missing star name' });
	if (!isPopulationId(row.population)) {
		issues.push({ star, field: 'population', message: `unknown population '${String(row.population)}'` });
	}
	if (!isFiniteNumber(row.periodDays)) {
		issues.push({ star, field: 'periodDays', message: `must be a finite number, got ${row.periodDays}` });
	} else if (row.periodDays <= 0) {
		issues.push({ star, field: 'periodDays', message: `must be positive, got ${row.periodDays}` });
	}
	if (!isAbsent(row.periodErrDays) && !(isFiniteNumber(row.periodErrDays) && row.periodErrDays >= 0)) {
		issues.push({ star, field: 'periodErrDays', message: 'must be a finite number ≥ 0' });
	}
	return issues;
}

function optionalNumberIssues(row: CalibratorRow): InputIssue[] {
	const issues: InputIssue[] = [];
	const fields = ['feh', 'fehErr', 'ebvErr', 'muHostErr', 'parallaxErrMas'] as const;
	for (const field of fields) {
		const value = row[field];
		if (!isAbsent(value) && !isFiniteNumber(value)) {
			issues.push({ star: row.star, field, message: `must be a finite number, got ${value}` });
		}
	}
	for (const field of ['fehErr', 'ebvErr', 'muHostErr'] as const) {
		const value = row[field];
		if (isFiniteNumber(value) && value < 0) issues.push({ star: row.star, field, message: 'must be ≥ 0' });
	}
	return issues;
}

function magnitudeIn(
	row: CalibratorRow,
	band: BandDefinition,
	ratio: number | null,
	issues: InputIssue[]
): Measured | null {
	if (typeof row.mags !== 'object' || row.mags === null) {
		issues.push({ star: row.star, field: 'mags', message: 'no magnitudes' });
		return null;
	}
	const direct = row.mags[band.id];
	const valid = (m: Measured | undefined): m is Measured =>
		m !== undefined && isFiniteNumber(m.value) && isFiniteNumber(m.error) && m.error >= 0;
	if (direct !== undefined && band.kind === 'wesenheit' && ratio !== null && ratio !== band.ratio) {
		issues.push({
			star: row.star,
			field: `mags.${band.id}`,
			message: `a ${band.id} magnitude given directly was formed with R = ${band.ratio}, not the chosen R = ${ratio}; give the component magnitudes instead`
		});
		return null;
	}
	if (direct !== undefined) {
		if (valid(direct)) return direct;
		issues.push({ star: row.star, field: `mags.${band.id}`, message: 'needs a finite magnitude and an error ≥ 0' });
		return null;
	}
	if (band.kind === 'single') {
		issues.push({ star: row.star, field: `mags.${band.id}`, message: `no magnitude in band ${band.id}` });
		return null;
	}
	const components = [...new Set([band.magnitudeBand, ...band.colourBands])];
	const missing = components.filter((id) => !valid(row.mags[id]));
	if (missing.length > 0) {
		for (const id of missing) {
			issues.push({
				star: row.star,
				field: `mags.${id}`,
				message: `${band.id} needs a finite magnitude and error in ${id}`
			});
		}
		return null;
	}
	return wesenheitMeasured(band, row.mags, ratio === null ? {} : { ratio });
}

function optionalParallaxCorrectionIssues(row: CalibratorRow): InputIssue[] {
	const issues: InputIssue[] = [];
	const correction = row.parallaxZpCorrectionMas;
	const error = row.parallaxZpCorrectionErrMas;
	if (!isAbsent(correction) && !isFiniteNumber(correction)) {
		issues.push({
			star: row.star,
			field: 'parallaxZpCorrectionMas',
			message: `must be a finite number, got ${correction}`
		});
	}
	if (!isAbsent(error) && !(isFiniteNumber(error) && error >= 0)) {
		issues.push({ star: row.star, field: 'parallaxZpCorrectionErrMas', message: 'must be a finite number ≥ 0' });
	}
	if (isAbsent(correction) && !isAbsent(error)) {
		issues.push({
			star: row.star,
			field: 'parallaxZpCorrectionErrMas',
			message: 'an error needs the zero-point correction it belongs to'
		});
	}
	return issues;
}

interface Extinction {
	value: number;
	error: number;
}

function extinctionFor(row: CalibratorRow, perEbv: number | null, issues: InputIssue[]): Extinction {
	if (perEbv === null) return { value: 0, error: 0 };
	if (!isFiniteNumber(row.ebv)) {
		issues.push({ star: row.star, field: 'ebv', message: `E(B−V) is needed to deredden, got ${row.ebv}` });
		return { value: 0, error: 0 };
	}
	return { value: perEbv * row.ebv, error: perEbv * (row.ebvErr ?? 0) };
}

/**
 * Turns calibrator rows into fit points for one band:
 * M = m − A_λ − μ with A_λ = (A_λ/E(B−V))·E(B−V) from the chosen law (none for Wesenheit magnitudes,
 * reddening-free by construction, Madore 1982) and μ from the parallax (μ = 10 − 5·log10(ϖ − ZP)) or
 * the host; σ_M² = σ_m² + (A_λ/E(B−V))²·σ_E² + σ_μ² with the per-star parts only, while errors shared
 * by several stars (the parallax zero point, a named host's distance) are returned as systematics.
 * Throws one CalibrationInputError listing every problem, naming star and field.
 */
export function prepareCalibrators(rows: readonly CalibratorRow[], options: PreparationOptions): PreparedCalibrators {
	const band = getBand(options.bandId);
	const warnings: CalibrationWarning[] = [];
	const issues: InputIssue[] = [];
	const zeroPoint = options.parallaxZeroPoint ?? NO_PARALLAX_ZERO_POINT;
	const rV = options.rV ?? DEFAULT_RV;
	const wesenheitRatio = band.kind === 'wesenheit' ? (options.wesenheitRatio ?? null) : null;

	const wantsDereddening = options.deredden ?? band.kind === 'single';
	if (band.kind === 'wesenheit' && options.deredden === true) {
		warnings.push({
			code: 'wesenheit_not_dereddened',
			message: `${band.id} is reddening-free by construction; no extinction is subtracted`,
			field: 'deredden',
			details: { bandId: band.id }
		});
	}
	let perEbv: number | null = null;
	if (band.kind === 'single' && wantsDereddening) {
		if (!options.extinctionLaw) {
			issues.push({
				star: null,
				field: 'extinctionLaw',
				message: `an extinction law is needed to deredden ${band.id}`
			});
		} else {
			perEbv = bandExtinctionPerEbv(options.extinctionLaw, band.id, rV, options.extinctionOptions);
		}
	} else if (band.kind === 'single') {
		warnings.push({
			code: 'not_dereddened',
			message: `${band.id} magnitudes are used without extinction correction`,
			field: 'deredden',
			details: { bandId: band.id }
		});
	}
	if (options.logPeriodRange && !(options.logPeriodRange.min <= options.logPeriodRange.max)) {
		issues.push({ star: null, field: 'logPeriodRange', message: 'min must not exceed max' });
	}

	rows.forEach((row, index) => issues.push(...selectionIssues(row, index)));
	if (issues.length > 0) throw new CalibrationInputError(issues);

	const excluded: ExcludedCalibrator[] = [];
	const stars: StarPreparation[] = [];
	const points: CalibratorPoint[] = [];
	const parallaxPoints: ParallaxFitPoint[] = [];
	const hostMembers = new Map<string, { value: number; error: number; stars: string[] }>();
	const selected = options.populations ? new Set(options.populations) : null;

	for (const row of rows) {
		if (selected && !selected.has(row.population)) {
			excluded.push({
				star: row.star,
				code: 'population_not_selected',
				message: `${row.star}: population ${row.population} is not among ${[...selected].join(', ')}`
			});
			continue;
		}
		const fundamentalised = options.fundamentalise === true && row.population === 'classical_first_overtone';
		const period = fundamentalised
			? fundamentalisePeriod(row.periodDays, row.periodErrDays ?? null, undefined, row.star)
			: { periodDays: row.periodDays, periodErrDays: row.periodErrDays ?? null };
		const logPeriod = Math.log10(period.periodDays);
		const range = options.logPeriodRange;
		if (range && (logPeriod < range.min || logPeriod > range.max)) {
			excluded.push({
				star: row.star,
				code: 'outside_period_range',
				message: `${row.star}: log P = ${logPeriod.toFixed(4)} is outside ${range.min}…${range.max}`
			});
			continue;
		}

		const rowIssues = optionalNumberIssues(row);
		if (options.anchor === 'parallax') rowIssues.push(...optionalParallaxCorrectionIssues(row));
		const apparent = magnitudeIn(row, band, wesenheitRatio, rowIssues);
		const extinction = extinctionFor(row, perEbv, rowIssues);
		let distanceModulus: Measured | null = null;
		let distanceSystematicErr = 0;
		let keepForParallaxSpaceOnly = false;

		if (options.anchor === 'parallax') {
			if (!isFiniteNumber(row.parallaxMas)) {
				rowIssues.push({
					star: row.star,
					field: 'parallaxMas',
					message: `a parallax anchor needs a parallax, got ${row.parallaxMas}`
				});
			} else if (!(isFiniteNumber(row.parallaxErrMas) && row.parallaxErrMas > 0)) {
				rowIssues.push({
					star: row.star,
					field: 'parallaxErrMas',
					message: `must be positive, got ${row.parallaxErrMas}`
				});
			} else if (!(ownParallax(row).value - zeroPoint.value > 0)) {
				if (options.nonPositiveParallax === 'parallax_space_only') {
					keepForParallaxSpaceOnly = true;
					warnings.push({
						code: 'non_positive_parallax',
						message: `${row.star}: ϖ − ZP = ${ownParallax(row).value - zeroPoint.value} mas has no distance; used in parallax space only`,
						star: row.star,
						field: 'parallaxMas',
						details: { parallaxMas: row.parallaxMas, zeroPointMas: zeroPoint.value }
					});
				} else {
					rowIssues.push({
						star: row.star,
						field: 'parallaxMas',
						message: `corrected parallax ϖ − ZP = ${ownParallax(row).value - zeroPoint.value} mas is not positive`
					});
				}
			} else {
				const own = ownParallax(row);
				const mu = distanceModulusFromParallax(
					{ star: row.star, parallaxMas: own.value, parallaxErrMas: own.error },
					zeroPoint
				);
				distanceModulus = { value: mu.value, error: mu.error };
				distanceSystematicErr = mu.systematicError;
			}
		} else if (!isFiniteNumber(row.muHost)) {
			rowIssues.push({
				star: row.star,
				field: 'muHost',
				message: `a host anchor needs a distance modulus, got ${row.muHost}`
			});
		} else {
			const hostErr = row.muHostErr ?? 0;
			if (row.host) {
				const member = hostMembers.get(row.host);
				if (member && (member.value !== row.muHost || member.error !== hostErr)) {
					rowIssues.push({
						star: row.star,
						field: 'muHost',
						message: `host ${row.host} has μ = ${member.value} ± ${member.error} for other stars, not ${row.muHost} ± ${hostErr}`
					});
				} else if (member) {
					member.stars.push(row.star);
				} else {
					hostMembers.set(row.host, { value: row.muHost, error: hostErr, stars: [row.star] });
				}
				distanceModulus = { value: row.muHost, error: 0 };
				distanceSystematicErr = hostErr;
			} else {
				distanceModulus = { value: row.muHost, error: hostErr };
			}
		}
		if (rowIssues.length > 0 || apparent === null) {
			issues.push(...rowIssues);
			continue;
		}

		const logPeriodErr = period.periodErrDays === null ? null : period.periodErrDays / (period.periodDays * Math.LN10);
		const dereddenedMag = apparent.value - extinction.value;
		const dereddenedMagErr = Math.hypot(apparent.error, extinction.error);
		const absMag = distanceModulus === null ? null : dereddenedMag - distanceModulus.value;
		const absMagErr = distanceModulus === null ? null : Math.hypot(dereddenedMagErr, distanceModulus.error);
		stars.push({
			star: row.star,
			population: row.population,
			periodDays: row.periodDays,
			fitPeriodDays: period.periodDays,
			fundamentalised,
			logPeriod,
			logPeriodErr,
			apparentMag: apparent,
			extinction: extinction.value,
			extinctionErr: extinction.error,
			distanceModulus,
			distanceSystematicErr,
			absMag,
			absMagErr
		});
		const feh = isFiniteNumber(row.feh) ? row.feh : null;
		const fehErr = isFiniteNumber(row.fehErr) ? row.fehErr : null;
		if (!keepForParallaxSpaceOnly && absMag !== null && absMagErr !== null) {
			points.push({ star: row.star, logPeriod, absMag, absMagErr, logPeriodErr, feh, fehErr });
		}
		if (options.anchor === 'parallax') {
			const own = ownParallax(row);
			parallaxPoints.push({
				star: row.star,
				logPeriod,
				logPeriodErr,
				dereddenedMag,
				dereddenedMagErr,
				parallaxMas: own.value,
				parallaxErrMas: own.error,
				feh,
				fehErr
			});
		}
		warnings.push(...periodWarnings(row.star, row.population, row.periodDays));
		if (options.validity) warnings.push(...validityWarnings(row.star, logPeriod, feh, options.validity));
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);

	const mixture = mixedPopulationWarning(stars.map((star) => star.population));
	if (mixture) warnings.push(mixture);

	if (options.anchor === 'parallax' && stars.length > 0) warnings.push(...zeroPointWarnings(rows, stars, options));

	const systematics: SharedSystematic[] = [];
	if (options.anchor === 'parallax' && stars.length > 0) {
		systematics.push({
			kind: 'parallax_zero_point',
			host: null,
			value: zeroPoint.value,
			error: zeroPoint.error,
			stars: stars.map((star) => star.star)
		});
	}
	for (const [host, member] of hostMembers) {
		systematics.push({ kind: 'host_distance', host, value: member.value, error: member.error, stars: member.stars });
	}
	return { bandId: band.id, anchor: options.anchor, points, parallaxPoints, stars, excluded, systematics, warnings };
}

/**
 * The parallax with the star's own zero point removed, ϖ_obs − ZP_star, and σ_ϖ with the correction's
 * error added in quadrature; the catalogue parallax as it is when the row has no correction.
 */
function ownParallax(row: CalibratorRow): Measured {
	const correction = isFiniteNumber(row.parallaxZpCorrectionMas) ? row.parallaxZpCorrectionMas : 0;
	const correctionErr = isFiniteNumber(row.parallaxZpCorrectionErrMas) ? row.parallaxZpCorrectionErrMas : 0;
	return {
		value: (row.parallaxMas as number) - correction,
		error: Math.hypot(row.parallaxErrMas as number, correctionErr)
	};
}

/** A parallax anchor with no zero point adopted, fitted or given per star warns, as does a partial per-star one. */
function zeroPointWarnings(
	rows: readonly CalibratorRow[],
	stars: readonly StarPreparation[],
	options: PreparationOptions
): CalibrationWarning[] {
	const used = new Set(stars.map((star) => star.star));
	const corrected = rows.filter((row) => used.has(row.star) && isFiniteNumber(row.parallaxZpCorrectionMas));
	if (corrected.length > 0 && corrected.length < used.size) {
		const missing = rows.filter((row) => used.has(row.star) && !isFiniteNumber(row.parallaxZpCorrectionMas));
		return [
			{
				code: 'parallax_zero_point_partial',
				message:
					`${missing.length} of ${used.size} stars have no per-star parallax zero-point correction ` +
					`(${missing
						.slice(0, 5)
						.map((row) => row.star)
						.join(', ')}${missing.length > 5 ? ', …' : ''}); their parallaxes are used as catalogued`,
				field: 'parallax_zp_correction_mas',
				details: { starsWithout: missing.length, stars: used.size }
			}
		];
	}
	if (corrected.length > 0 || options.parallaxZeroPoint !== undefined || options.parallaxZeroPointFitted) return [];
	return [
		{
			code: 'parallax_zero_point_missing',
			message:
				'no parallax zero point was adopted, fitted or given per star: Gaia parallaxes carry an offset of ' +
				'tens of µas (about −0.017 mas for quasars, Lindegren et al. 2021), which biases every distance the same way',
			field: 'parallax_offset',
			details: { gaiaQuasarZeroPointMas: -0.017 }
		}
	];
}
