import { isBandId } from '../bands';
import { POPULATION_IDS } from '../types';

/**
 * The fields of a calibrator table. Canonical column names are read directly; any other header must be
 * mapped to one of these with its unit. Values are stored in each field's canonical unit.
 */
export type FieldKind = 'text' | 'population' | 'number';

export interface UnitConversion {
	/** Unit id as a curator writes it in a column mapping. */
	id: string;
	label: string;
	toCanonical: (value: number) => number;
}

export interface FieldDefinition {
	field: string;
	kind: FieldKind;
	canonicalUnit: string | null;
	units: UnitConversion[];
	/** Refuses impossible values; returns the reason, or null when the value is acceptable. */
	check?: (value: number) => string | null;
	required?: boolean;
}

const identity = (id: string, label: string): UnitConversion => ({ id, label, toCanonical: (value) => value });

const MAGNITUDE_UNITS = [identity('mag', 'magnitudes')];
const PERIOD_UNITS: UnitConversion[] = [
	identity('d', 'days'),
	{ id: 'h', label: 'hours', toCanonical: (value) => value / 24 },
	{ id: 'log10_d', label: 'log10 of the period in days', toCanonical: (value) => 10 ** value }
];
const PERIOD_ERROR_UNITS: UnitConversion[] = [
	identity('d', 'days'),
	{ id: 'h', label: 'hours', toCanonical: (value) => value / 24 }
];
const PARALLAX_UNITS: UnitConversion[] = [
	identity('mas', 'milliarcseconds'),
	{ id: 'uas', label: 'microarcseconds', toCanonical: (value) => value / 1000 },
	{ id: 'arcsec', label: 'arcseconds', toCanonical: (value) => value * 1000 }
];
const DEX_UNITS = [identity('dex', 'dex')];

const positive = (value: number) => (value > 0 ? null : 'must be positive');
const nonNegative = (value: number) => (value >= 0 ? null : 'must not be negative');

const STATIC_FIELDS: FieldDefinition[] = [
	{ field: 'star', kind: 'text', canonicalUnit: null, units: [], required: true },
	{ field: 'cross_id', kind: 'text', canonicalUnit: null, units: [] },
	{ field: 'population', kind: 'population', canonicalUnit: null, units: [], required: true },
	{ field: 'period_days', kind: 'number', canonicalUnit: 'd', units: PERIOD_UNITS, check: positive, required: true },
	{ field: 'period_err_days', kind: 'number', canonicalUnit: 'd', units: PERIOD_ERROR_UNITS, check: nonNegative },
	// Parallaxes may be zero or negative: a parallax-space fit uses them as measured.
	{ field: 'parallax_mas', kind: 'number', canonicalUnit: 'mas', units: PARALLAX_UNITS },
	{ field: 'parallax_err_mas', kind: 'number', canonicalUnit: 'mas', units: PARALLAX_UNITS, check: positive },
	// A per-star catalogue zero point (e.g. from the Lindegren et al. 2021 recipe, computed outside Candlebook):
	// ϖ_true = ϖ_obs − ZP_star − ZP_adopted.
	{ field: 'parallax_zp_correction_mas', kind: 'number', canonicalUnit: 'mas', units: PARALLAX_UNITS },
	{
		field: 'parallax_zp_correction_err_mas',
		kind: 'number',
		canonicalUnit: 'mas',
		units: PARALLAX_UNITS,
		check: nonNegative
	},
	{ field: 'mu_host', kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS },
	{ field: 'mu_host_err', kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS, check: nonNegative },
	{ field: 'host', kind: 'text', canonicalUnit: null, units: [] },
	{ field: 'ebv', kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS },
	{ field: 'ebv_err', kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS, check: nonNegative },
	{ field: 'feh', kind: 'number', canonicalUnit: 'dex', units: DEX_UNITS },
	{ field: 'feh_err', kind: 'number', canonicalUnit: 'dex', units: DEX_UNITS, check: nonNegative },
	{ field: 'reference', kind: 'text', canonicalUnit: null, units: [] }
];

const STATIC_BY_NAME = new Map(STATIC_FIELDS.map((definition) => [definition.field, definition]));

/** The definition of a field name (`mag_<band>` and `mag_err_<band>` for any catalogued band), or null. */
export function fieldDefinition(field: string): FieldDefinition | null {
	const known = STATIC_BY_NAME.get(field);
	if (known) return known;
	const error = /^mag_err_(.+)$/.exec(field);
	if (error) {
		return isBandId(error[1])
			? { field, kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS, check: nonNegative }
			: null;
	}
	const magnitude = /^mag_(.+)$/.exec(field);
	if (magnitude && isBandId(magnitude[1]))
		return { field, kind: 'number', canonicalUnit: 'mag', units: MAGNITUDE_UNITS };
	return null;
}

export const REQUIRED_FIELDS = STATIC_FIELDS.filter((definition) => definition.required).map(
	(definition) => definition.field
);
export const STATIC_FIELD_NAMES = STATIC_FIELDS.map((definition) => definition.field);

export function isPopulation(value: string): value is (typeof POPULATION_IDS)[number] {
	return (POPULATION_IDS as readonly string[]).includes(value);
}
