import type { HostStar } from './host-csv';

/**
 * The worksheet's form fields, as strings (exactly what a browser posts), and the two API request
 * bodies built from them. The page's form actions and its in-place script both use these, so the
 * worksheet asks the same questions with and without JavaScript.
 */
export interface WorksheetFields {
	relation: string;
	relation_typed: string;
	stars_csv: string;
	extinction_law: string;
	r_v: string;
	clip_sigma: string;
	foreground_ebv_err: string;
	host_metallicity: string;
	host_metallicity_err: string;
	host_metallicity_scale: string;
	host_metallicity_conversion_err: string;
	adopted_slope_err: string;
	crowding_correction: string;
	crowding_correction_err: string;
	velocity_frame: string;
	barycentric_correction_km_s: string;
	velocity_mode: string;
	velocity_km_s: string;
	velocity_km_s_err: string;
	observed_wavelength_nm: string;
	observed_wavelength_nm_err: string;
	observed_medium: string;
	peculiar_velocity_sigma_km_s: string;
	ra_deg: string;
	dec_deg: string;
}

export const EMPTY_FIELDS: WorksheetFields = {
	relation: '',
	relation_typed: '',
	stars_csv: '',
	extinction_law: '',
	r_v: '',
	clip_sigma: '3',
	foreground_ebv_err: '',
	host_metallicity: '',
	host_metallicity_err: '',
	host_metallicity_scale: 'feh',
	host_metallicity_conversion_err: '',
	adopted_slope_err: '',
	crowding_correction: '',
	crowding_correction_err: '',
	velocity_frame: '',
	barycentric_correction_km_s: '',
	velocity_mode: 'velocity',
	velocity_km_s: '',
	velocity_km_s_err: '',
	observed_wavelength_nm: '',
	observed_wavelength_nm_err: '',
	observed_medium: 'air',
	peculiar_velocity_sigma_km_s: '250',
	ra_deg: '',
	dec_deg: ''
};

export function fieldsFrom(source: Record<string, string | undefined>): WorksheetFields {
	const fields = { ...EMPTY_FIELDS };
	for (const key of Object.keys(EMPTY_FIELDS) as (keyof WorksheetFields)[]) {
		const value = source[key];
		if (typeof value === 'string') fields[key] = value;
	}
	return fields;
}

export type FieldErrors = Partial<Record<keyof WorksheetFields | 'form', string>>;

/** The pinned reference: a typed `slug@n` wins over the picker. */
export function relationRef(fields: WorksheetFields): string {
	return fields.relation_typed.trim() || fields.relation.trim();
}

function optionalNumber(text: string): number | undefined | 'invalid' {
	const trimmed = text.trim();
	if (trimmed === '') return undefined;
	const value = Number(trimmed);
	return Number.isFinite(value) ? value : 'invalid';
}

export interface DistanceRequestBody {
	relation: string;
	stars: HostStar[];
	extinction_law?: string;
	r_v?: number;
	clip_sigma?: number | null;
	foreground_ebv_err?: number;
	host_metallicity?: { value: number; error: number; scale: 'feh' | 'o_h'; conversion_error?: number };
	adopted_slope_err?: number;
	crowding_correction?: { value: number; error: number };
}

export function distanceRequestFrom(
	fields: WorksheetFields,
	stars: HostStar[]
): { body: DistanceRequestBody } | { errors: FieldErrors } {
	const errors: FieldErrors = {};
	const relation = relationRef(fields);
	if (!/^[a-z0-9]+(?:-[a-z0-9]+)*@[1-9]\d*$/.test(relation)) {
		errors.relation_typed = relation ? `"${relation}" is not of the form slug@version` : 'choose or type a relation';
	}
	const rV = optionalNumber(fields.r_v);
	if (rV === 'invalid' || (rV !== undefined && rV <= 0)) errors.r_v = 'R_V must be a number greater than 0';
	const clip = fields.clip_sigma.trim() === 'none' ? null : optionalNumber(fields.clip_sigma);
	if (clip === 'invalid' || (typeof clip === 'number' && clip <= 0))
		errors.clip_sigma = 'σ-clipping needs a number > 0, or "none"';
	const shared = sharedInputsFrom(fields, errors);
	if (Object.keys(errors).length > 0) return { errors };
	return {
		body: {
			relation,
			stars,
			...(fields.extinction_law ? { extinction_law: fields.extinction_law } : {}),
			...(typeof rV === 'number' ? { r_v: rV } : {}),
			...(clip === undefined ? {} : { clip_sigma: clip as number | null }),
			...shared
		}
	};
}

/** The host-wide inputs; a value and its error come as a pair, errors are ≥ 0. */
function sharedInputsFrom(fields: WorksheetFields, errors: FieldErrors): Partial<DistanceRequestBody> {
	const read = (name: keyof WorksheetFields, nonNegative: boolean): number | undefined => {
		const value = optionalNumber(fields[name]);
		if (value === 'invalid' || (nonNegative && typeof value === 'number' && value < 0)) {
			errors[name] = nonNegative ? 'must be a number ≥ 0' : 'must be a number';
			return undefined;
		}
		return value;
	};
	const pair = (valueName: keyof WorksheetFields, errorName: keyof WorksheetFields) => {
		const value = read(valueName, false);
		const error = read(errorName, true);
		if ((value === undefined) !== (error === undefined) && !errors[valueName] && !errors[errorName]) {
			errors[value === undefined ? valueName : errorName] = 'give the value and its error together';
		}
		return value !== undefined && error !== undefined ? { value, error } : undefined;
	};
	const out: Partial<DistanceRequestBody> = {};
	const foreground = read('foreground_ebv_err', true);
	if (foreground !== undefined) out.foreground_ebv_err = foreground;
	const metallicity = pair('host_metallicity', 'host_metallicity_err');
	const conversion = read('host_metallicity_conversion_err', true);
	if (metallicity) {
		out.host_metallicity = {
			...metallicity,
			scale: fields.host_metallicity_scale === 'o_h' ? 'o_h' : 'feh',
			...(conversion === undefined ? {} : { conversion_error: conversion })
		};
	}
	const slope = read('adopted_slope_err', true);
	if (slope !== undefined) out.adopted_slope_err = slope;
	const crowding = pair('crowding_correction', 'crowding_correction_err');
	if (crowding) out.crowding_correction = crowding;
	return out;
}

/** The body of POST /api/v1/hubble for the host's combined distance; the API itself checks it. */
export function hubbleRequestFrom(
	fields: WorksheetFields,
	distance: { distance_mpc: number; mu0_err_stat: number; mu0_err_sys: number }
): { body: Record<string, unknown> } | { errors: FieldErrors } {
	const errors: FieldErrors = {};
	// First order, as distance_mpc_err: σ_d = d·(ln 10/5)·σ_μ, for each part.
	const perMag = (distance.distance_mpc * Math.LN10) / 5;
	const body: Record<string, unknown> = {
		distance_mpc: distance.distance_mpc,
		distance_mpc_err_stat: perMag * distance.mu0_err_stat,
		distance_mpc_err_sys: perMag * distance.mu0_err_sys
	};
	if (!['topocentric', 'heliocentric', 'cmb'].includes(fields.velocity_frame)) {
		errors.velocity_frame = 'say in which frame the velocity or wavelength was measured';
	} else body.velocity_frame = fields.velocity_frame;
	if (fields.velocity_frame === 'topocentric') {
		const correction = optionalNumber(fields.barycentric_correction_km_s);
		if (typeof correction === 'number') body.barycentric_correction_km_s = correction;
		else errors.barycentric_correction_km_s = 'a topocentric measurement needs its barycentric correction (km/s)';
	}
	const put = (name: keyof WorksheetFields, key = name) => {
		const value = optionalNumber(fields[name]);
		if (value === 'invalid') errors[name] = 'must be a number';
		else if (value !== undefined) body[key] = value;
	};
	if (fields.velocity_mode === 'line') {
		put('observed_wavelength_nm');
		put('observed_wavelength_nm_err');
		body.observed_medium = fields.observed_medium === 'vacuum' ? 'vacuum' : 'air';
		if (body.observed_wavelength_nm === undefined && !errors.observed_wavelength_nm) {
			errors.observed_wavelength_nm = 'enter the observed wavelength of Hα';
		}
	} else {
		put('velocity_km_s');
		put('velocity_km_s_err');
		if (body.velocity_km_s === undefined && !errors.velocity_km_s) errors.velocity_km_s = 'enter a recession velocity';
	}
	put('peculiar_velocity_sigma_km_s');
	put('ra_deg');
	put('dec_deg');
	return Object.keys(errors).length > 0 ? { errors } : { body };
}
