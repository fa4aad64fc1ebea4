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
	if (Object.keys(errors).length > 0) return { errors };
	return {
		body: {
			relation,
			stars,
			...(fields.extinction_law ? { extinction_law: fields.extinction_law } : {}),
			...(typeof rV === 'number' ? { r_v: rV } : {}),
			...(clip === undefined ? {} : { clip_sigma: clip as number | null })
		}
	};
}

/** The body of POST /api/v1/hubble for the host's combined distance; the API itself checks it. */
export function hubbleRequestFrom(
	fields: WorksheetFields,
	distance: { distance_mpc: number; distance_mpc_err: number }
): { body: Record<string, unknown> } | { errors: FieldErrors } {
	const errors: FieldErrors = {};
	const body: Record<string, unknown> = {
		distance_mpc: distance.distance_mpc,
		distance_mpc_err: distance.distance_mpc_err
	};
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
