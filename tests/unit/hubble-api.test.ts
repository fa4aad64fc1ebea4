import { describe, expect, test } from 'vitest';
import { estimateHubble, HubbleRequestSchema } from '../../src/lib/server/api/hubble';

const C = 299_792.458; // km/s, SI exact

const request = (body: Record<string, unknown>) => HubbleRequestSchema.parse(body);

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
			distance_mpc: 10,
			distance_mpc_err: 1,
			velocity_km_s: 700,
			observed_wavelength_nm: 657
		});
		expect(both.success).toBe(false);
		expect(both.error!.issues.map((issue) => issue.path.join('.'))).toContain('velocity_km_s');
		const noMedium = HubbleRequestSchema.safeParse({
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
});
