import { describe, expect, test } from 'vitest';
import { barycentricCorrection } from '../../src/lib/calibration/velocity';
import { estimateHubble, HubbleRequestSchema } from '../../src/lib/server/api/hubble';

const C = 299_792.458; // km/s, SI exact

const request = (body: Record<string, unknown>) =>
	HubbleRequestSchema.parse({ velocity_frame: 'heliocentric', ...body });

describe('POST /api/v1/hubble semantics', () => {
	test('a measured Hα line in air gives z, v = cz and H0 = v/d with its error budget', () => {
		// Worked example by hand: λ_obs = 1.004 × 656.28 nm (Hα in air, NIST, from memory) → z = 0.004,
		// v = 1199.170 km/s; d = 16.5 ± 0.8 Mpc → H0 = 72.677 km/s/Mpc.
		const result = estimateHubble(
			request({
				distance_mpc: 16.5,
				distance_mpc_err: 0.8,
				observed_wavelength_nm: 656.28 * 1.004,
				observed_wavelength_nm_err: 0.01,
				observed_medium: 'air'
			})
		);
		expect(result.z).toBeCloseTo(0.004, 12);
		expect(result.velocity_km_s).toBeCloseTo(C * 0.004, 9);
		expect(result.h0).toBeCloseTo((C * 0.004) / 16.5, 9);
		expect(result.error_budget.distance).toBeCloseTo(0.8 / 16.5, 12);
		// σ_pec = 250 km/s (common practice) is 21% of v here: the largest term, and it is in the error.
		expect(result.error_budget.peculiar_velocity).toBeCloseTo(250 / (C * 0.004), 12);
		const quadrature = Math.hypot(
			result.error_budget.distance,
			result.error_budget.velocity,
			result.error_budget.peculiar_velocity
		);
		expect(result.h0_err).toBeCloseTo(result.h0 * quadrature, 9);
		expect(result.cautions[0]).toMatchObject({ code: 'peculiar_velocity' });
		expect(result.velocity_frame).toBe('heliocentric');
		// One HII region's Hα carries the disc's rotation; one galaxy's H0 is illustrative.
		expect(result.cautions.map((c) => c.code)).toEqual(
			expect.arrayContaining(['illustrative_single_galaxy', 'line_includes_rotation', 'not_cmb_frame'])
		);
		expect(result.illustrative).toBe(true);
	});

	test('the low-z model uses cz[1 + ½(1 − q0)z]', () => {
		const result = estimateHubble(
			request({
				distance_mpc: 100,
				distance_mpc_err: 5,
				velocity_model: 'low_z',
				q0: -0.55,
				observed_wavelength_nm: 656.46 * 1.02,
				observed_medium: 'vacuum'
			})
		);
		expect(result.velocity_km_s).toBeCloseTo(C * 0.02 * (1 + 0.5 * 1.55 * 0.02), 6);
		expect(result.velocity_formula).toBe('cz_q0');
	});

	test('towards the CMB dipole apex the CMB-frame velocity gains the full 369.8 km/s', () => {
		// Apex at l = 264.0°, b = 48.3° (Planck 2018, from memory) ≈ RA 167.94°, Dec −6.94° (from memory).
		const result = estimateHubble(
			request({
				distance_mpc: 30,
				distance_mpc_err: 1,
				velocity_km_s: 2000,
				velocity_km_s_err: 10,
				ra_deg: 167.94,
				dec_deg: -6.94
			})
		);
		expect(result.velocity_frame).toBe('cmb');
		expect(result.cmb_correction_km_s!).toBeGreaterThan(369);
		expect(result.velocity_km_s).toBeCloseTo(2000 + result.cmb_correction_km_s!, 9);
	});

	test('contradictory or incomplete inputs are refused by the schema with the field named', () => {
		const both = HubbleRequestSchema.safeParse({
			velocity_frame: 'heliocentric',
			distance_mpc: 10,
			distance_mpc_err: 1,
			velocity_km_s: 700,
			observed_wavelength_nm: 657
		});
		expect(both.success).toBe(false);
		expect(both.error!.issues.map((issue) => issue.path.join('.'))).toContain('velocity_km_s');
		const noMedium = HubbleRequestSchema.safeParse({
			velocity_frame: 'heliocentric',
			distance_mpc: 10,
			distance_mpc_err: 1,
			observed_wavelength_nm: 657
		});
		expect(noMedium.error!.issues.map((issue) => issue.path.join('.'))).toContain('observed_medium');
	});

	test('a blueshifted line cannot give an H0 and answers 422 naming the field', () => {
		expect(() =>
			estimateHubble(
				request({ distance_mpc: 0.8, distance_mpc_err: 0.05, observed_wavelength_nm: 655.6, observed_medium: 'air' })
			)
		).toThrow(expect.objectContaining({ status: 422 }));
	});

	test('the velocity frame is required; topocentric needs a barycentric correction; a CMB velocity is not corrected twice', () => {
		const base = { distance_mpc: 20, distance_mpc_err: 1, velocity_km_s: 1500 };
		const paths = (body: Record<string, unknown>) =>
			HubbleRequestSchema.safeParse(body).error?.issues.map((issue) => issue.path.join('.')) ?? [];
		expect(paths(base)).toContain('velocity_frame');
		expect(paths({ ...base, velocity_frame: 'topocentric' })).toContain('barycentric_correction_km_s');
		expect(paths({ ...base, velocity_frame: 'heliocentric', barycentric_correction_km_s: 12 })).toContain(
			'barycentric_correction_km_s'
		);
		expect(paths({ ...base, velocity_frame: 'cmb', ra_deg: 10, dec_deg: 10 })).toContain('ra_deg');
		const cmb = estimateHubble(request({ ...base, velocity_frame: 'cmb' }));
		expect(cmb.velocity_km_s).toBe(1500);
		expect(cmb.velocity_frame).toBe('cmb');
		expect(cmb.cmb_correction_km_s).toBeNull();
		// A topocentric line: 1 + z_bary = (1 + z_topo)(1 + v_bc/c), before anything else.
		const topo = estimateHubble(
			request({
				velocity_frame: 'topocentric',
				barycentric_correction_km_s: -25,
				distance_mpc: 20,
				distance_mpc_err: 1,
				observed_wavelength_nm: 656.28 * 1.005,
				observed_medium: 'air'
			})
		);
		expect(topo.z_measured).toBeCloseTo(0.005, 12);
		expect(topo.z).toBeCloseTo(1.005 * (1 - 25 / C) - 1, 12);
		expect(topo.barycentric_correction_km_s).toBe(-25);
		// Or computed from the site and the time (checked against astropy in velocity.test.ts).
		const site = { latitude_deg: -24.6272, longitude_deg: -70.4045, height_m: 2635 };
		const computed = estimateHubble(
			request({
				...base,
				velocity_frame: 'topocentric',
				observatory: site,
				observed_at: '2016-03-10T03:00:00Z',
				ra_deg: 193.44,
				dec_deg: -6.62
			})
		);
		const bc = barycentricCorrection(
			{ raDeg: 193.44, decDeg: -6.62 },
			{ latitudeDeg: -24.6272, longitudeDeg: -70.4045, heightM: 2635 },
			new Date('2016-03-10T03:00:00Z')
		);
		expect(computed.barycentric_correction_km_s).toBe(bc);
		expect(computed.velocity_km_s).toBeCloseTo(1500 + bc + computed.cmb_correction_km_s!, 9);
		expect(paths({ ...base, velocity_frame: 'topocentric', observatory: site, ra_deg: 1, dec_deg: 1 })).toContain(
			'observed_at'
		);
	});

	test('the CMB correction acts on z before the q0 term: v = c·z′[1 + ½(1 − q0)z′], 1 + z′ = (1 + z)(1 + v_dipole·cos θ/c)', () => {
		const body = {
			distance_mpc: 100,
			distance_mpc_err: 5,
			velocity_model: 'low_z',
			q0: -0.55,
			observed_wavelength_nm: 656.46 * 1.02,
			observed_medium: 'vacuum',
			ra_deg: 167.94,
			dec_deg: -6.94
		};
		const result = estimateHubble(request(body));
		const projection = result.cmb_correction_km_s!;
		const zCmb = 1.02 * (1 + projection / C) - 1;
		expect(result.z).toBeCloseTo(zCmb, 12);
		expect(result.velocity_km_s).toBeCloseTo(C * zCmb * (1 + 0.5 * 1.55 * zCmb), 6);
		// Adding the dipole after the q0 term instead differs by a few km/s here: the order is checked.
		const after = C * 0.02 * (1 + 0.5 * 1.55 * 0.02) + projection;
		expect(Math.abs(result.velocity_km_s - after)).toBeGreaterThan(1);
	});

	test('NGC 4775: heliocentric 1566 km/s becomes 1902 ± 23 km/s in the CMB frame (NED, as quoted on fr.wikipedia "NGC 4775"; NED uses Fixsen et al. 1996, 371 km/s to l = 264.14°, b = 48.26°, from memory)', () => {
		const started = performance.now();
		// RA 12h53m45.7s, Dec −06°37′20″ (the same page). Our dipole is Planck 2018's (PRODUCT.md, from memory):
		// the two apexes differ by ~1 km/s here, and NED rounds to 1 km/s, so 3 km/s is the tolerance.
		const result = estimateHubble(
			request({
				distance_mpc: 25,
				distance_mpc_err: 2,
				velocity_km_s: 1566,
				velocity_km_s_err: 1,
				ra_deg: (12 + 53 / 60 + 45.7 / 3600) * 15,
				dec_deg: -(6 + 37 / 60 + 20 / 3600)
			})
		);
		expect(Math.abs(result.velocity_km_s - 1902)).toBeLessThan(3);
		console.info(
			`NGC 4775 v_CMB = ${result.velocity_km_s.toFixed(1)} km/s (NED 1902) in ${(performance.now() - started).toFixed(1)} ms`
		);
	});

	test('the distance systematic is its own line of H0’s budget, apart from the statistical terms and the peculiar velocity', () => {
		const result = estimateHubble(
			request({
				distance_mpc: 20,
				distance_mpc_err_stat: 0.2,
				distance_mpc_err_sys: 0.5,
				velocity_km_s: 1400,
				velocity_km_s_err: 10,
				velocity_frame: 'cmb'
			})
		);
		const h0 = 1400 / 20;
		expect(result.error_budget.distance_statistical).toBeCloseTo(0.01, 14);
		expect(result.error_budget.distance_systematic).toBeCloseTo(0.025, 14);
		expect(result.error_budget.distance).toBeCloseTo(Math.hypot(0.01, 0.025), 14);
		expect(result.h0_err_sys).toBeCloseTo(h0 * 0.025, 12);
		expect(result.h0_err_stat).toBeCloseTo(h0 * Math.hypot(0.01, 10 / 1400, 250 / 1400), 12);
		expect(result.h0_err).toBeCloseTo(Math.hypot(result.h0_err_stat, result.h0_err_sys!), 12);
		const half = HubbleRequestSchema.safeParse({
			...result,
			velocity_frame: 'cmb',
			distance_mpc: 20,
			distance_mpc_err_sys: 1
		});
		expect(half.success).toBe(false);
	});
});
