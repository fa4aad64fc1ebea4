/**
 * Physical and astronomical constants used by the calibration core, each with its source.
 */

/** Speed of light in vacuum (km/s); exact by the SI definition of the metre. */
export const SPEED_OF_LIGHT_KM_S = 299_792.458;

/** Astronomical unit (m); exact by IAU 2012 Resolution B2. */
export const ASTRONOMICAL_UNIT_M = 149_597_870_700;

/** Parsec (m): 648 000/π au, IAU 2015 Resolution B2. */
export const PARSEC_M = (648_000 / Math.PI) * ASTRONOMICAL_UNIT_M;

/** Julian year (s): 365.25 days of 86 400 s (IAU). */
export const JULIAN_YEAR_S = 365.25 * 86_400;

/** Light year (m): c × one Julian year (IAU). */
export const LIGHT_YEAR_M = SPEED_OF_LIGHT_KM_S * 1000 * JULIAN_YEAR_S;

/** Light years in one parsec (≈ 3.261 564). */
export const LIGHT_YEARS_PER_PARSEC = PARSEC_M / LIGHT_YEAR_M;

/** Hα rest wavelength in air (nm); NIST Atomic Spectra Database, from memory. */
export const H_ALPHA_AIR_NM = 656.28;

/** Hα rest wavelength in vacuum (nm); NIST Atomic Spectra Database, from memory. */
export const H_ALPHA_VACUUM_NM = 656.46;

/** Default one-dimensional peculiar-velocity dispersion of galaxies (km/s); common practice. */
export const DEFAULT_PECULIAR_VELOCITY_KM_S = 250;

/** Solar motion relative to the CMB: dipole amplitude and apex in galactic coordinates (Planck 2018, from memory). */
export const CMB_DIPOLE = Object.freeze({
	speedKmS: 369.8,
	galacticLongitudeDeg: 264.0,
	galacticLatitudeDeg: 48.3,
	source: 'Planck 2018 (from memory)'
});

/**
 * Orientation of the galactic frame in ICRS/J2000: RA and Dec of the north galactic pole and the galactic
 * longitude of the north celestial pole (IAU definition, values common practice / from memory).
 */
export const GALACTIC_POLE_J2000 = Object.freeze({
	raDeg: 192.85948,
	decDeg: 27.12825,
	northCelestialPoleLongitudeDeg: 122.93192
});
