import { describe, expect, test } from 'vitest';
import { CMB_DIPOLE, H_ALPHA_AIR_NM, SPEED_OF_LIGHT_KM_S } from './constants';
import { CalibrationInputError } from './types';
import {
	cmbDipoleProjection,
	equatorialToGalactic,
	heliocentricToCmb,
	hubbleConstant,
	peculiarVelocityCaution,
	recessionVelocity,
	redshiftFromLine,
	shiftRedshift,
	barycentricCorrection
} from './velocity';
import { ASTROPY_MISSING_REASON, astropyVersion, hasAstropy, runPython } from '../../../tests/support/astropy';

/** Smallest angle between two directions on the sphere (deg). */
function separationDeg(l1: number, b1: number, l2: number, b2: number): number {
	const r = Math.PI / 180;
	const c = Math.sin(b1 * r) * Math.sin(b2 * r) + Math.cos(b1 * r) * Math.cos(b2 * r) * Math.cos((l1 - l2) * r);
	return Math.acos(Math.min(1, c)) / r;
}

describe('redshift and recession velocity', () => {
	test('a 1% shift of Hα in air gives z = 0.01 and v = cz = 2997.92458 km/s (definition of z; SI c)', () => {
		const z = redshiftFromLine({ observedNm: { value: H_ALPHA_AIR_NM * 1.01, error: 0.02 }, medium: 'air' });
		expect(z.value).toBeCloseTo(0.01, 14);
		expect(z.restNm).toBe(656.28);
		expect(z.error).toBeCloseTo(0.02 / 656.28, 15); // σ_z = σ_λ/λ_rest
		const v = recessionVelocity(z);
		expect(v.value).toBeCloseTo(2997.92458, 8);
		expect(v.error).toBeCloseTo((SPEED_OF_LIGHT_KM_S * 0.02) / 656.28, 10);
		expect(v.formula).toBe('cz');
	});

	test('the same observed wavelength in vacuum uses 656.46 nm (NIST vacuum Hα, from memory)', () => {
		const z = redshiftFromLine({ observedNm: { value: 663.0, error: 0 }, medium: 'vacuum', line: 'h_alpha' });
		expect(z.value).toBeCloseTo(663.0 / 656.46 - 1, 14);
		expect(z.restNm).toBe(656.46);
	});

	test('the rest-wavelength error adds in quadrature: σ_z² = (σ_o/λ_r)² + (λ_o σ_r/λ_r²)²', () => {
		const z = redshiftFromLine({
			observedNm: { value: 660, error: 0.03 },
			medium: 'air',
			restNm: { value: 656, error: 0.04 }
		});
		expect(z.error).toBeCloseTo(Math.hypot(0.03 / 656, (660 * 0.04) / 656 ** 2), 15);
	});

	test('the q0 expansion cz[1 + ½(1 − q0)z] (Peebles 1993 §13, from memory): q0 = 1 reduces to cz; q0 = −0.55 at z = 0.1', () => {
		const z = { value: 0.1, error: 1e-4 };
		expect(recessionVelocity(z, { q0: 1 }).value).toBeCloseTo(SPEED_OF_LIGHT_KM_S * 0.1, 9);
		const v = recessionVelocity(z, { q0: -0.55 });
		expect(v.value).toBeCloseTo(29_979.2458 * (1 + 0.5 * 1.55 * 0.1), 6);
		expect(v.error).toBeCloseTo(SPEED_OF_LIGHT_KM_S * (1 + 1.55 * 0.1) * 1e-4, 9);
		expect(v.q0).toBe(-0.55);
	});

	test('a non-positive wavelength is refused with the field named', () => {
		expect(() => redshiftFromLine({ observedNm: { value: -1, error: 0 }, medium: 'air' })).toThrow(
			CalibrationInputError
		);
		try {
			redshiftFromLine({ observedNm: { value: 0, error: 0 }, medium: 'air' });
		} catch (error) {
			expect((error as CalibrationInputError).issues[0].field).toBe('observed_nm');
		}
	});
});

describe('heliocentric → CMB frame', () => {
	test('Galactic centre RA 266.405°, Dec −28.936° maps to l ≈ 0, b ≈ 0 within 0.01° (Sgr A* region, from memory)', () => {
		const { lDeg, bDeg } = equatorialToGalactic(266.405, -28.936);
		expect(separationDeg(lDeg, bDeg, 0, 0)).toBeLessThan(0.01);
	});

	test('the north galactic pole maps to b = 90° and the north celestial pole to l = 122.93192° (IAU frame definition)', () => {
		expect(equatorialToGalactic(192.85948, 27.12825).bDeg).toBeCloseTo(90, 8);
		const ncp = equatorialToGalactic(0, 89.999999);
		expect(ncp.lDeg).toBeCloseTo(122.93192, 3);
		expect(ncp.bDeg).toBeCloseTo(27.12825, 4);
	});

	test('M31 (RA 10.6847°, Dec +41.2690°) is at l ≈ 121.17°, b ≈ −21.57° to 0.02° (NED/SIMBAD, from memory)', () => {
		const { lDeg, bDeg } = equatorialToGalactic(10.6847, 41.269);
		expect(separationDeg(lDeg, bDeg, 121.1743, -21.5733)).toBeLessThan(0.02);
	});

	test('a galaxy at the dipole apex gets +369.8 km/s, the antipode −369.8, 90° away 0 (Planck 2018 dipole, from memory)', () => {
		const apex = { lDeg: CMB_DIPOLE.galacticLongitudeDeg, bDeg: CMB_DIPOLE.galacticLatitudeDeg };
		const anti = { lDeg: apex.lDeg + 180, bDeg: -apex.bDeg };
		expect(cmbDipoleProjection(apex)).toBeCloseTo(369.8, 9);
		expect(cmbDipoleProjection(anti)).toBeCloseTo(-369.8, 9);
		expect(cmbDipoleProjection({ lDeg: apex.lDeg, bDeg: apex.bDeg - 90 })).toBeCloseTo(0, 9);
		const v = heliocentricToCmb({ value: 1000, error: 5 }, apex);
		expect(v.value).toBeCloseTo(1369.8, 9);
		expect(v.error).toBe(5);
	});

	test('an equatorial position and its galactic equivalent get the same correction', () => {
		const galactic = equatorialToGalactic(150.1, 2.2);
		expect(cmbDipoleProjection({ raDeg: 150.1, decDeg: 2.2 })).toBeCloseTo(cmbDipoleProjection(galactic), 10);
	});
});

describe('H0 and the peculiar-velocity caution', () => {
	test.each([
		// PRODUCT.md: σ_pec = 250 km/s is ~36% of the Hubble-flow velocity at 10 Mpc and ~12% at 30 Mpc (H0 ≈ 70).
		[10, 0.357, 0.36],
		[30, 0.119, 0.12]
	])('at %d Mpc with H0 = 70, σ_pec/v = %f (≈ %f)', (mpc, exact, rounded) => {
		const caution = peculiarVelocityCaution(70 * mpc);
		expect(caution.details?.fraction as number).toBeCloseTo(exact, 3);
		expect(Math.round((caution.details?.fraction as number) * 100) / 100).toBe(rounded);
		expect(caution.code).toBe('peculiar_velocity');
	});

	test('H0 = v/d with the distance, velocity and σ_pec terms in quadrature', () => {
		const h0 = hubbleConstant({ velocity: { value: 2100, error: 30 }, distanceMpc: { value: 30, error: 1.5 } });
		expect(h0.value).toBeCloseTo(70, 12);
		expect(h0.budget.distance).toBeCloseTo(0.05, 12);
		expect(h0.budget.velocity).toBeCloseTo(30 / 2100, 12);
		expect(h0.budget.peculiarVelocity).toBeCloseTo(250 / 2100, 12);
		expect(h0.error).toBeCloseTo(70 * Math.hypot(0.05, 30 / 2100, 250 / 2100), 10);
		expect(h0.error / h0.value).toBeCloseTo(0.1299, 4); // dominated by σ_pec/v = 11.9%, not the 5% distance error
		const noPec = hubbleConstant({
			velocity: { value: 2100, error: 30 },
			distanceMpc: { value: 30, error: 1.5 },
			peculiarVelocityKmS: 0
		});
		expect(noPec.error).toBeLessThan(h0.error / 2);
	});
});

describe('frame corrections against astropy', () => {
	test.skipIf(!hasAstropy())(
		`ICRS → Galactic (l, b) agrees with astropy ${astropyVersion() ?? ''} SkyCoord(...).galactic to 2e-4° at nine positions${hasAstropy() ? '' : ` — ${ASTROPY_MISSING_REASON}`}`,
		() => {
			const started = performance.now();
			const positions = [
				[0, 0],
				[193.4404, -6.6222],
				[10.6847, 41.269],
				[83.8221, -5.3911],
				[266.405, -28.936],
				[150.1, 2.2],
				[300, 60],
				[45, -75],
				[359.9, 89]
			];
			const astropy = runPython<[number, number][]>(
				`from astropy.coordinates import SkyCoord
import astropy.units as u
c = SkyCoord(ra=[p[0] for p in data]*u.deg, dec=[p[1] for p in data]*u.deg, frame='icrs').galactic
print(json.dumps([[float(l), float(b)] for l, b in zip(c.l.deg, c.b.deg)]))`,
				positions
			);
			positions.forEach(([ra, dec], i) => {
				const ours = equatorialToGalactic(ra, dec);
				// FK5 J2000 pole constants vs astropy's ICRS → Galactic: they differ by tens of milliarcseconds.
				expect(separationDeg(ours.lDeg, ours.bDeg, astropy[i][0], astropy[i][1])).toBeLessThan(2e-4);
			});
			console.info(`astropy galactic check: ${(performance.now() - started).toFixed(0)} ms`);
		},
		60_000
	);

	test('a frame velocity composes with z: 1 + z′ = (1 + z)(1 + v/c), and the error scales with it', () => {
		const shifted = shiftRedshift({ value: 0.01, error: 1e-5 }, 300);
		expect(shifted.value).toBeCloseTo(1.01 * (1 + 300 / SPEED_OF_LIGHT_KM_S) - 1, 15);
		expect(shifted.error).toBeCloseTo(1e-5 * (1 + 300 / SPEED_OF_LIGHT_KM_S), 18);
		expect(shiftRedshift({ value: 0.02, error: 0 }, 0).value).toBeCloseTo(0.02, 15);
	});
});

describe('barycentric correction against astropy, offline', () => {
	test.skipIf(!hasAstropy())(
		`agrees with astropy ${astropyVersion() ?? ''} SkyCoord.radial_velocity_correction('barycentric') to 0.03 km/s (IERS-B bundled, no download)${hasAstropy() ? '' : ` — ${ASTROPY_MISSING_REASON}`}`,
		() => {
			const started = performance.now();
			// Sites as coordinates (rounded, from memory): Paranal, Mauna Kea, La Palma; times inside the bundled IERS-B range.
			const cases = [
				{
					site: { latitudeDeg: -24.6272, longitudeDeg: -70.4045, heightM: 2635 },
					utc: '2016-03-10T03:00:00Z',
					ra: 193.44,
					dec: -6.62
				},
				{
					site: { latitudeDeg: 19.8207, longitudeDeg: -155.4681, heightM: 4205 },
					utc: '2017-08-17T06:30:00Z',
					ra: 197.45,
					dec: -23.38
				},
				{
					site: { latitudeDeg: 28.7606, longitudeDeg: -17.8816, heightM: 2396 },
					utc: '2018-12-01T22:00:00Z',
					ra: 10.68,
					dec: 41.27
				},
				{
					site: { latitudeDeg: -24.6272, longitudeDeg: -70.4045, heightM: 2635 },
					utc: '2019-06-21T00:00:00Z',
					ra: 270.0,
					dec: -30.0
				}
			];
			const astropy = runPython<number[]>(
				`from astropy.utils import iers
iers.conf.auto_download = False
from astropy.coordinates import SkyCoord, EarthLocation
from astropy.time import Time
import astropy.units as u
out = []
for c in data:
    loc = EarthLocation.from_geodetic(lon=c['site']['longitudeDeg']*u.deg, lat=c['site']['latitudeDeg']*u.deg, height=c['site']['heightM']*u.m)
    sc = SkyCoord(ra=c['ra']*u.deg, dec=c['dec']*u.deg, frame='icrs')
    out.append(float(sc.radial_velocity_correction('barycentric', obstime=Time(c['utc'], scale='utc'), location=loc).to(u.km/u.s).value))
print(json.dumps(out))`,
				cases
			);
			cases.forEach((c, i) => {
				const ours = barycentricCorrection({ raDeg: c.ra, decDeg: c.dec }, c.site, new Date(c.utc));
				console.info(`${c.utc}: ours ${ours.toFixed(4)} km/s, astropy ${astropy[i].toFixed(4)} km/s`);
				expect(Math.abs(ours - astropy[i])).toBeLessThan(0.03);
			});
			expect(Math.max(...astropy.map(Math.abs))).toBeGreaterThan(5);
			console.info(`barycentric check: ${(performance.now() - started).toFixed(0)} ms`);
		},
		60_000
	);
});
