/**
 * Redshift from a spectral line, recession velocity, the heliocentric → CMB frame correction and H0.
 *
 * Only the low-redshift forms are offered: v = c·z, or the expansion v = c·z·[1 + ½(1 − q0)·z]
 * (e.g. Peebles 1993, Principles of Physical Cosmology, §13; common practice). The special-relativistic
 * Doppler formula is deliberately absent: cosmological redshift is the stretching of wavelengths by
 * the expansion of space, not a velocity through it, so that formula does not describe it.
 */
import {
	CMB_DIPOLE,
	DEFAULT_PECULIAR_VELOCITY_KM_S,
	GALACTIC_POLE_J2000,
	H_ALPHA_AIR_NM,
	H_ALPHA_VACUUM_NM,
	SPEED_OF_LIGHT_KM_S
} from './constants';
import { CalibrationInputError, type CalibrationWarning, type Measured } from './types';

export type WavelengthMedium = 'air' | 'vacuum';

/** Rest wavelengths (nm) of the preset lines, per medium. */
export const LINE_REST_WAVELENGTHS_NM = {
	h_alpha: { air: H_ALPHA_AIR_NM, vacuum: H_ALPHA_VACUUM_NM }
} as const;
export type LinePreset = keyof typeof LINE_REST_WAVELENGTHS_NM;

export interface LineMeasurement {
	/** Observed wavelength and its 1σ error (nm). */
	observedNm: Measured;
	/** Medium the observed wavelength is given in; the rest wavelength is taken in the same medium. */
	medium: WavelengthMedium;
	/** A preset line, or an explicit rest wavelength (nm, same medium) with an optional error. */
	line?: LinePreset;
	restNm?: Measured;
}

const DEG = Math.PI / 180;

function fail(field: string, message: string): never {
	throw new CalibrationInputError([{ star: null, field, message }]);
}

function requirePositive(field: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0) fail(field, 'must be a finite number > 0');
}

function requireNonNegative(field: string, value: number): void {
	if (!Number.isFinite(value) || value < 0) fail(field, 'must be a finite number ≥ 0');
}

/**
 * z = λ_obs/λ_rest − 1 with both wavelengths in the same medium;
 * σ_z² = (σ_obs/λ_rest)² + (λ_obs σ_rest/λ_rest²)².
 */
export function redshiftFromLine(measurement: LineMeasurement): Measured & { restNm: number } {
	const { observedNm, medium } = measurement;
	requirePositive('observed_nm', observedNm.value);
	requireNonNegative('observed_nm_error', observedNm.error);
	if (medium !== 'air' && medium !== 'vacuum') fail('medium', 'must be "air" or "vacuum"');
	let rest: Measured;
	if (measurement.restNm) {
		rest = measurement.restNm;
		requirePositive('rest_nm', rest.value);
		requireNonNegative('rest_nm_error', rest.error);
	} else {
		const line = measurement.line ?? 'h_alpha';
		const preset = LINE_REST_WAVELENGTHS_NM[line];
		if (!preset) fail('line', `unknown line preset "${line}"`);
		rest = { value: preset[medium], error: 0 };
	}
	const value = observedNm.value / rest.value - 1;
	const error = Math.hypot(observedNm.error / rest.value, (observedNm.value * rest.error) / rest.value ** 2);
	return { value, error, restNm: rest.value };
}

export interface VelocityOptions {
	/** Deceleration parameter for v = c·z·[1 + ½(1 − q0)·z]; omit for v = c·z. */
	q0?: number;
}

export interface RecessionVelocity extends Measured {
	formula: 'cz' | 'cz_q0';
	q0: number | null;
}

/** v = c·z, or c·z·[1 + ½(1 − q0)·z] when q0 is stated; σ_v = |dv/dz|·σ_z. */
export function recessionVelocity(z: Measured, options: VelocityOptions = {}): RecessionVelocity {
	if (!Number.isFinite(z.value)) fail('z', 'must be finite');
	requireNonNegative('z_error', z.error);
	const c = SPEED_OF_LIGHT_KM_S;
	if (options.q0 === undefined) {
		return { value: c * z.value, error: c * z.error, formula: 'cz', q0: null };
	}
	if (!Number.isFinite(options.q0)) fail('q0', 'must be finite');
	const k = 0.5 * (1 - options.q0);
	return {
		value: c * z.value * (1 + k * z.value),
		error: c * Math.abs(1 + 2 * k * z.value) * z.error,
		formula: 'cz_q0',
		q0: options.q0
	};
}

export interface GalacticPosition {
	lDeg: number;
	bDeg: number;
}

/**
 * ICRS/J2000 (α, δ) → galactic (l, b) by rotation about the galactic pole:
 *   sin b = sin δ sin δ_G + cos δ cos δ_G cos(α − α_G)
 *   l = l_NCP − atan2(cos δ sin(α − α_G), sin δ cos δ_G − cos δ sin δ_G cos(α − α_G))
 * with α_G = 192.85948°, δ_G = 27.12825°, l_NCP = 122.93192° (IAU galactic frame; common practice).
 */
export function equatorialToGalactic(raDeg: number, decDeg: number): GalacticPosition {
	const { raDeg: raPole, decDeg: decPole, northCelestialPoleLongitudeDeg: lNcp } = GALACTIC_POLE_J2000;
	const dec = decDeg * DEG;
	const dRa = (raDeg - raPole) * DEG;
	const dPole = decPole * DEG;
	const sinB = Math.sin(dec) * Math.sin(dPole) + Math.cos(dec) * Math.cos(dPole) * Math.cos(dRa);
	const b = Math.asin(Math.min(1, Math.max(-1, sinB)));
	const y = Math.cos(dec) * Math.sin(dRa);
	const x = Math.sin(dec) * Math.cos(dPole) - Math.cos(dec) * Math.sin(dPole) * Math.cos(dRa);
	const l = (((lNcp - Math.atan2(y, x) / DEG) % 360) + 360) % 360;
	return { lDeg: l, bDeg: b / DEG };
}

export interface Dipole {
	speedKmS: number;
	galacticLongitudeDeg: number;
	galacticLatitudeDeg: number;
}

export type SkyPosition = GalacticPosition | { raDeg: number; decDeg: number };

function toGalactic(position: SkyPosition): GalacticPosition {
	return 'lDeg' in position ? position : equatorialToGalactic(position.raDeg, position.decDeg);
}

/**
 * The dipole's projection on the line of sight, v_dipole·cos θ, with
 * cos θ = sin b sin b_0 + cos b cos b_0 cos(l − l_0) for the apex (l_0, b_0).
 */
export function cmbDipoleProjection(position: SkyPosition, dipole: Dipole = CMB_DIPOLE): number {
	const { lDeg, bDeg } = toGalactic(position);
	const b = bDeg * DEG;
	const b0 = dipole.galacticLatitudeDeg * DEG;
	const cosTheta =
		Math.sin(b) * Math.sin(b0) + Math.cos(b) * Math.cos(b0) * Math.cos((lDeg - dipole.galacticLongitudeDeg) * DEG);
	return dipole.speedKmS * cosTheta;
}

/** v_CMB = v_hel + v_dipole·cos θ (first order in v/c). */
export function heliocentricToCmb(
	heliocentric: Measured,
	position: SkyPosition,
	dipole: Dipole = CMB_DIPOLE
): Measured & { correctionKmS: number } {
	const correctionKmS = cmbDipoleProjection(position, dipole);
	return { value: heliocentric.value + correctionKmS, error: heliocentric.error, correctionKmS };
}

export interface HubbleConstantInput {
	/** Recession velocity (km/s), ideally in the CMB frame. */
	velocity: Measured;
	/** The distance with its total 1σ error. */
	distanceMpc: Measured;
	/** The distance's statistical and systematic parts (Mpc), when known; their quadrature sum is the total. */
	distanceSplitMpc?: { statistical: number; systematic: number };
	/** σ_pec (km/s); default 250 (common practice). */
	peculiarVelocityKmS?: number;
}

export interface HubbleConstantEstimate extends Measured {
	/**
	 * Fractional contributions to σ_H0/H0, each a 1σ term added in quadrature. `distance` is the
	 * quadrature sum of `distanceStatistical` and `distanceSystematic` when the split is known.
	 */
	budget: {
		distance: number;
		distanceStatistical: number | null;
		distanceSystematic: number | null;
		velocity: number;
		peculiarVelocity: number;
	};
	/** σ_H0 without the distance's systematic part, and that part alone (km/s/Mpc). */
	statisticalError: number;
	systematicError: number | null;
	peculiarVelocityKmS: number;
	caution: CalibrationWarning;
}

/** σ_pec/v: what a single galaxy's peculiar motion does to H0 at this velocity. */
export function peculiarVelocityCaution(
	velocityKmS: number,
	peculiarVelocityKmS: number = DEFAULT_PECULIAR_VELOCITY_KM_S
): CalibrationWarning {
	const fraction = peculiarVelocityKmS / Math.abs(velocityKmS);
	return {
		code: 'peculiar_velocity',
		message: `a peculiar velocity of ${peculiarVelocityKmS} km/s is ${(100 * fraction).toFixed(0)}% of this galaxy's recession velocity; one galaxy gives H0 only to about that precision`,
		field: 'velocity',
		details: {
			peculiar_velocity_km_s: peculiarVelocityKmS,
			velocity_km_s: velocityKmS,
			fraction
		}
	};
}

/**
 * H0 = v/d (km/s/Mpc), with (σ_H0/H0)² = (σ_d/d)² + (σ_v/v)² + (σ_pec/v)², where
 * σ_d² = σ_d,stat² + σ_d,sys² when the split is given: the distance's systematic part is reported
 * apart from the statistical terms and from the peculiar velocity.
 */
export function hubbleConstant(input: HubbleConstantInput): HubbleConstantEstimate {
	const { velocity, distanceMpc } = input;
	const sigmaPec = input.peculiarVelocityKmS ?? DEFAULT_PECULIAR_VELOCITY_KM_S;
	requirePositive('velocity', velocity.value);
	requireNonNegative('velocity_error', velocity.error);
	requirePositive('distance_mpc', distanceMpc.value);
	requireNonNegative('distance_mpc_error', distanceMpc.error);
	requireNonNegative('peculiar_velocity_km_s', sigmaPec);
	const split = input.distanceSplitMpc;
	if (split) {
		requireNonNegative('distance_mpc_err_stat', split.statistical);
		requireNonNegative('distance_mpc_err_sys', split.systematic);
	}
	const value = velocity.value / distanceMpc.value;
	const budget = {
		distance: distanceMpc.error / distanceMpc.value,
		distanceStatistical: split ? split.statistical / distanceMpc.value : null,
		distanceSystematic: split ? split.systematic / distanceMpc.value : null,
		velocity: velocity.error / velocity.value,
		peculiarVelocity: sigmaPec / velocity.value
	};
	const error = value * Math.hypot(budget.distance, budget.velocity, budget.peculiarVelocity);
	const statisticalError =
		value * Math.hypot(budget.distanceStatistical ?? budget.distance, budget.velocity, budget.peculiarVelocity);
	return {
		value,
		error,
		statisticalError,
		systematicError: budget.distanceSystematic === null ? null : value * budget.distanceSystematic,
		budget,
		peculiarVelocityKmS: sigmaPec,
		caution: peculiarVelocityCaution(velocity.value, sigmaPec)
	};
}

/**
 * Adds a frame's velocity to a redshift: 1 + z' = (1 + z)(1 + v/c) (redshifts compose by
 * multiplication; first order in v/c for the frame's own motion — common practice). Used for the
 * barycentric correction of a topocentric line and for the CMB dipole, before any q0 term.
 */
export function shiftRedshift(z: Measured, frameVelocityKmS: number): Measured {
	if (!Number.isFinite(frameVelocityKmS)) fail('frame_velocity_km_s', 'must be finite');
	const factor = 1 + frameVelocityKmS / SPEED_OF_LIGHT_KM_S;
	return { value: (1 + z.value) * factor - 1, error: z.error * factor };
}

/** Cautions every H0 from one galaxy carries. */
export function singleGalaxyCautions(fromLine: boolean): CalibrationWarning[] {
	const cautions: CalibrationWarning[] = [
		{
			code: 'illustrative_single_galaxy',
			message:
				'an H0 from one galaxy is illustrative: a measurement of H0 combines many galaxies in the Hubble flow, each with its own distance ladder systematics'
		}
	];
	if (fromLine) {
		cautions.push({
			code: 'line_includes_rotation',
			message:
				"the Hα of a single HII region includes the disc's rotation at that point (up to ~200–300 km/s in a large spiral, common practice); the systemic velocity needs the galaxy's centre or its rotation curve",
			field: 'observed_wavelength_nm'
		});
	}
	return cautions;
}

export interface ObservingSite {
	/** Geodetic latitude (deg), east longitude (deg) and height above the WGS84 ellipsoid (m). */
	latitudeDeg: number;
	longitudeDeg: number;
	heightM: number;
}

const AU_KM = 149_597_870.7;
const DAY_S = 86_400;
const J2000_JD = 2_451_545.0;
const EARTH_ROTATION_RAD_S = 7.292115e-5;
const WGS84_A_M = 6_378_137;
const WGS84_F = 1 / 298.257223563;

/** Julian date of a UTC instant (UTC taken for UT and TT alike: a minute moves nothing here by more than 1 m/s). */
function julianDate(date: Date): number {
	return date.getTime() / (DAY_S * 1000) + 2_440_587.5;
}

/** Geocentric Sun, ecliptic of J2000 (AU): Meeus, Astronomical Algorithms, ch. 25 low-accuracy series (~0.01°). */
function sunGeocentricJ2000(jd: number): [number, number, number] {
	const t = (jd - J2000_JD) / 36_525;
	const deg = Math.PI / 180;
	const l0 = 280.46646 + 36_000.76983 * t + 0.0003032 * t * t;
	const m = 357.52911 + 35_999.05029 * t - 0.0001537 * t * t;
	const e = 0.016708634 - 0.000042037 * t - 0.0000001267 * t * t;
	const c =
		(1.914602 - 0.004817 * t - 0.000014 * t * t) * Math.sin(m * deg) +
		(0.019993 - 0.000101 * t) * Math.sin(2 * m * deg) +
		0.000289 * Math.sin(3 * m * deg);
	const nu = (m + c) * deg;
	const r = (1.000001018 * (1 - e * e)) / (1 + e * Math.cos(nu));
	// Longitude of date → mean equinox of J2000 by the general precession in longitude, 1.396971°/century.
	const lambda = (l0 + c - 1.396971 * t) * deg;
	const obliquity = 23.4392911 * deg;
	const x = r * Math.cos(lambda);
	const y = r * Math.sin(lambda);
	return [x, y * Math.cos(obliquity), y * Math.sin(obliquity)];
}

/**
 * Barycentric correction (km/s) of a topocentric radial velocity towards (α, δ) (ICRS/J2000) seen from
 * a site at a UTC instant: the observer's velocity projected on the line of sight, v_obs·n̂, from the
 * Earth's orbital velocity (Meeus ch. 25 Sun, differentiated; the Sun's own motion about the barycentre,
 * ≲ 0.013 km/s, and the Earth's about the Earth–Moon barycentre, ≲ 0.013 km/s, are left out) and its
 * rotation ω·(N + h)·cos φ·cos δ·sin(α − LST) with GMST from IAU 1982 (Meeus 12.4). Good to a few
 * hundredths of a km/s: ample beside a line's measured error and σ_pec.
 */
export function barycentricCorrection(
	target: { raDeg: number; decDeg: number },
	site: ObservingSite,
	utc: Date
): number {
	const { raDeg, decDeg } = target;
	const { latitudeDeg, longitudeDeg, heightM } = site;
	if (!(Math.abs(decDeg) <= 90) || !Number.isFinite(raDeg)) fail('dec_deg', 'must be a finite position');
	if (!(Math.abs(latitudeDeg) <= 90) || !Number.isFinite(longitudeDeg) || !Number.isFinite(heightM)) {
		fail('observatory', 'needs a latitude in [−90°, 90°], a longitude and a height');
	}
	if (Number.isNaN(utc.getTime())) fail('observed_at', 'must be a valid UTC time');
	const jd = julianDate(utc);
	const step = 0.01;
	const ahead = sunGeocentricJ2000(jd + step);
	const behind = sunGeocentricJ2000(jd - step);
	// The Earth moves opposite to the geocentric Sun.
	const orbit = ahead.map((value, i) => (-(value - behind[i]) / (2 * step)) * (AU_KM / DAY_S));
	const ra = raDeg * DEG;
	const dec = decDeg * DEG;
	const n = [Math.cos(dec) * Math.cos(ra), Math.cos(dec) * Math.sin(ra), Math.sin(dec)];
	const orbital = orbit[0] * n[0] + orbit[1] * n[1] + orbit[2] * n[2];
	const t = (jd - J2000_JD) / 36_525;
	const gmstDeg = 280.46061837 + 360.98564736629 * (jd - J2000_JD) + 0.000387933 * t * t - (t * t * t) / 38_710_000;
	const lst = (gmstDeg + longitudeDeg) * DEG;
	const phi = latitudeDeg * DEG;
	const e2 = WGS84_F * (2 - WGS84_F);
	const primeVertical = WGS84_A_M / Math.sqrt(1 - e2 * Math.sin(phi) ** 2);
	const axisDistanceKm = ((primeVertical + heightM) * Math.cos(phi)) / 1000;
	const rotation = EARTH_ROTATION_RAD_S * axisDistanceKm * Math.cos(dec) * Math.sin(ra - lst);
	return orbital + rotation;
}
