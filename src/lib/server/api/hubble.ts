import { z } from 'zod';
import {
	barycentricCorrection,
	CalibrationInputError,
	cmbDipoleProjection,
	heliocentricToCmb,
	hubbleConstant,
	shiftRedshift,
	singleGalaxyCautions,
	recessionVelocity,
	redshiftFromLine,
	type Measured
} from '$lib/calibration';
import { fail } from './errors';
import { describeOperation, registerApiSchema } from './schema-registry';

/** POST /api/v1/hubble: a distance and a velocity (or a measured line) → z, v, H0 and its error budget. */
const OPERATION = 'POST /api/v1/hubble';
const positive = z.number().positive();
const nonNegative = z.number().nonnegative();
const VELOCITY_FRAMES = ['topocentric', 'heliocentric', 'cmb'] as const;

export const HubbleRequestSchema = registerApiSchema(
	z
		.object({
			distance_mpc: positive,
			distance_mpc_err: nonNegative.optional().describe('Total 1σ of the distance, when it is not split (Mpc).'),
			distance_mpc_err_stat: nonNegative
				.optional()
				.describe("Statistical 1σ of the distance (Mpc), e.g. from the distances answer's mu0_err_stat."),
			distance_mpc_err_sys: nonNegative
				.optional()
				.describe("Systematic 1σ of the distance (Mpc), e.g. from the distances answer's mu0_err_sys."),
			velocity_frame: z
				.enum(VELOCITY_FRAMES)
				.describe(
					'Frame of the given velocity or wavelength. topocentric needs barycentric_correction_km_s; heliocentric is moved to the CMB frame when ra_deg/dec_deg are given; cmb is used as it is.'
				),
			barycentric_correction_km_s: z
				.number()
				.optional()
				.describe(
					"Barycentric correction (km/s) of a topocentric measurement, added as 1 + z' = (1 + z)(1 + v/c); or give observatory, observed_at, ra_deg and dec_deg to have it computed."
				),
			observatory: z
				.object({
					latitude_deg: z.number().min(-90).max(90),
					longitude_deg: z.number().min(-180).max(360).describe('East longitude.'),
					height_m: z.number().min(-500).max(10_000)
				})
				.strict()
				.optional()
				.describe('Geodetic (WGS84) position of the telescope, for a computed barycentric correction.'),
			observed_at: z.iso
				.datetime({ offset: false, local: false })
				.optional()
				.describe('UTC time of the observation, for a computed barycentric correction.'),
			velocity_km_s: positive.optional(),
			velocity_km_s_err: nonNegative.optional(),
			observed_wavelength_nm: positive.optional(),
			observed_wavelength_nm_err: nonNegative.optional(),
			observed_medium: z.enum(['air', 'vacuum']).optional(),
			rest_wavelength_nm: positive.optional(),
			velocity_model: z.enum(['linear', 'low_z']).default('linear'),
			q0: z.number().optional(),
			peculiar_velocity_sigma_km_s: nonNegative.default(250),
			ra_deg: z.number().min(0).lt(360).optional(),
			dec_deg: z.number().min(-90).max(90).optional()
		})
		.strict()
		.superRefine((body, ctx) => {
			const hasVelocity = body.velocity_km_s !== undefined;
			const hasLine = body.observed_wavelength_nm !== undefined;
			if (hasVelocity === hasLine) {
				ctx.addIssue({
					code: 'custom',
					path: ['velocity_km_s'],
					message: 'give either velocity_km_s or observed_wavelength_nm'
				});
			}
			if (hasLine && !body.observed_medium) {
				ctx.addIssue({
					code: 'custom',
					path: ['observed_medium'],
					message: 'say whether the wavelength is in air or vacuum'
				});
			}
			if (body.velocity_model === 'low_z' && body.q0 === undefined) {
				ctx.addIssue({ code: 'custom', path: ['q0'], message: 'the low_z model needs q0' });
			}
			const hasTotal = body.distance_mpc_err !== undefined;
			const splitParts = [body.distance_mpc_err_stat, body.distance_mpc_err_sys].filter((v) => v !== undefined).length;
			if (hasTotal === splitParts > 0 || splitParts === 1) {
				ctx.addIssue({
					code: 'custom',
					path: [
						splitParts === 1
							? body.distance_mpc_err_stat === undefined
								? 'distance_mpc_err_stat'
								: 'distance_mpc_err_sys'
							: 'distance_mpc_err'
					],
					message: 'give either distance_mpc_err, or both distance_mpc_err_stat and distance_mpc_err_sys'
				});
			}
			const computable = body.observatory !== undefined || body.observed_at !== undefined;
			const given = body.barycentric_correction_km_s !== undefined;
			if (body.velocity_frame === 'topocentric') {
				if (given === computable) {
					ctx.addIssue({
						code: 'custom',
						path: ['barycentric_correction_km_s'],
						message:
							'a topocentric measurement needs its barycentric correction: give barycentric_correction_km_s, or observatory, observed_at, ra_deg and dec_deg'
					});
				} else if (computable && (!body.observatory || !body.observed_at || body.ra_deg === undefined)) {
					ctx.addIssue({
						code: 'custom',
						path: [!body.observatory ? 'observatory' : !body.observed_at ? 'observed_at' : 'ra_deg'],
						message: 'a computed barycentric correction needs observatory, observed_at, ra_deg and dec_deg'
					});
				}
			} else if (given || computable) {
				ctx.addIssue({
					code: 'custom',
					path: [given ? 'barycentric_correction_km_s' : 'observatory'],
					message: `a barycentric correction applies only to a topocentric measurement, not a ${body.velocity_frame} one`
				});
			}
			if (body.velocity_frame === 'cmb' && body.ra_deg !== undefined) {
				ctx.addIssue({
					code: 'custom',
					path: ['ra_deg'],
					message: 'the velocity is already in the CMB frame; leave out ra_deg and dec_deg so it is not corrected twice'
				});
			}
			if ((body.ra_deg === undefined) !== (body.dec_deg === undefined)) {
				ctx.addIssue({
					code: 'custom',
					path: ['ra_deg'],
					message: 'give both ra_deg and dec_deg for a CMB-frame correction'
				});
			}
		}),
	{ id: 'HubbleRequest', description: 'Inputs of a Hubble-constant estimate for one galaxy.', requestFor: [OPERATION] }
);

const CautionSchema = z.object({
	code: z.string(),
	message: z.string(),
	details: z.record(z.string(), z.union([z.number(), z.string(), z.null()])).optional()
});

export const HubbleResponseSchema = registerApiSchema(
	z.object({
		z: z.number().nullable(),
		z_err: z.number().nullable(),
		velocity_km_s: z.number(),
		velocity_km_s_err: z.number(),
		z_measured: z.number().nullable().describe('z of the line in the frame it was measured in.'),
		input_frame: z.enum(VELOCITY_FRAMES),
		velocity_frame: z.enum(['heliocentric', 'cmb']).describe('Frame of velocity_km_s, the velocity H0 uses.'),
		velocity_formula: z.enum(['given', 'cz', 'cz_q0']),
		barycentric_correction_km_s: z.number().nullable(),
		cmb_correction_km_s: z.number().nullable(),
		h0: z.number(),
		h0_err: z.number(),
		h0_err_stat: z
			.number()
			.describe('σ_H0 from the distance statistical error, the velocity and the peculiar velocity.'),
		h0_err_sys: z.number().nullable().describe("σ_H0 from the distance's systematic error alone (null if not split)."),
		illustrative: z
			.literal(true)
			.describe('An H0 from one galaxy illustrates the method; it is not a measurement of H0.'),
		error_budget: z
			.object({
				distance: z.number().describe('Total distance term (the quadrature sum of the next two when split).'),
				distance_statistical: z.number().nullable(),
				distance_systematic: z.number().nullable(),
				velocity: z.number(),
				peculiar_velocity: z.number()
			})
			.describe('Each 1σ term as a fraction of H0.'),
		cautions: z.array(CautionSchema)
	}),
	{ id: 'HubbleResponse', description: 'H0 = v/d with each error term as a fraction of H0.', responseFor: [OPERATION] }
);

describeOperation(OPERATION, {
	description:
		'H0 = v/d for one galaxy, from a recession velocity or a measured line, in a stated frame: a topocentric measurement is moved to the barycentre with the given correction, a heliocentric one to the CMB frame from ra_deg/dec_deg (both applied to z before any q0 term). The error budget keeps the distance statistical and systematic parts, the velocity and the peculiar velocity apart; the answer is labelled illustrative.'
});

export type HubbleRequest = z.infer<typeof HubbleRequestSchema>;
export type HubbleResponse = z.infer<typeof HubbleResponseSchema>;

export function estimateHubble(body: HubbleRequest): HubbleResponse {
	try {
		const position =
			body.ra_deg !== undefined && body.dec_deg !== undefined ? { raDeg: body.ra_deg, decDeg: body.dec_deg } : null;
		const barycentric =
			body.velocity_frame !== 'topocentric'
				? null
				: (body.barycentric_correction_km_s ??
					barycentricCorrection(
						position!,
						{
							latitudeDeg: body.observatory!.latitude_deg,
							longitudeDeg: body.observatory!.longitude_deg,
							heightM: body.observatory!.height_m
						},
						new Date(body.observed_at!)
					));
		const correction = position === null ? null : cmbDipoleProjection(position);
		let measured: Measured | null = null;
		let z: Measured | null = null;
		let velocity: Measured;
		let formula: HubbleResponse['velocity_formula'] = 'given';
		if (body.observed_wavelength_nm !== undefined) {
			measured = redshiftFromLine({
				observedNm: { value: body.observed_wavelength_nm, error: body.observed_wavelength_nm_err ?? 0 },
				medium: body.observed_medium!,
				...(body.rest_wavelength_nm ? { restNm: { value: body.rest_wavelength_nm, error: 0 } } : {})
			});
			// Frame corrections act on z; the q0 term comes after, on the corrected z.
			z = barycentric === null ? measured : shiftRedshift(measured, barycentric);
			if (correction !== null) z = shiftRedshift(z, correction);
			const v = recessionVelocity(z, body.velocity_model === 'low_z' ? { q0: body.q0 } : {});
			velocity = v;
			formula = v.formula;
		} else {
			// A given velocity is cz already: frame velocities add to first order in v/c.
			velocity = { value: body.velocity_km_s! + (barycentric ?? 0), error: body.velocity_km_s_err ?? 0 };
			if (position !== null) velocity = heliocentricToCmb(velocity, position);
		}
		const split =
			body.distance_mpc_err_stat !== undefined && body.distance_mpc_err_sys !== undefined
				? { statistical: body.distance_mpc_err_stat, systematic: body.distance_mpc_err_sys }
				: undefined;
		const estimate = hubbleConstant({
			velocity,
			distanceMpc: {
				value: body.distance_mpc,
				error: split ? Math.hypot(split.statistical, split.systematic) : (body.distance_mpc_err ?? 0)
			},
			...(split ? { distanceSplitMpc: split } : {}),
			peculiarVelocityKmS: body.peculiar_velocity_sigma_km_s
		});
		const frame = body.velocity_frame === 'cmb' || correction !== null ? 'cmb' : 'heliocentric';
		const cautions: HubbleResponse['cautions'] = [estimate.caution, ...singleGalaxyCautions(measured !== null)].map(
			(caution) => ({
				code: caution.code,
				message: caution.message,
				...(caution.details ? { details: caution.details } : {})
			})
		);
		if (frame === 'heliocentric') {
			cautions.push({
				code: 'not_cmb_frame',
				message:
					'the velocity stays heliocentric: give ra_deg and dec_deg to move it to the CMB frame (the dipole is up to ±370 km/s)'
			});
		}
		return {
			z: z?.value ?? null,
			z_err: z?.error ?? null,
			z_measured: measured?.value ?? null,
			input_frame: body.velocity_frame,
			velocity_km_s: velocity.value,
			velocity_km_s_err: velocity.error,
			velocity_frame: frame,
			velocity_formula: formula,
			barycentric_correction_km_s: barycentric,
			cmb_correction_km_s: correction,
			h0: estimate.value,
			h0_err: estimate.error,
			h0_err_stat: estimate.statisticalError,
			h0_err_sys: estimate.systematicError,
			illustrative: true,
			error_budget: {
				distance: estimate.budget.distance,
				distance_statistical: estimate.budget.distanceStatistical,
				distance_systematic: estimate.budget.distanceSystematic,
				velocity: estimate.budget.velocity,
				peculiar_velocity: estimate.budget.peculiarVelocity
			},
			cautions
		};
	} catch (error) {
		if (error instanceof CalibrationInputError) {
			fail(
				422,
				'The inputs cannot give an H0.',
				error.issues.map((issue) => ({ path: issue.field, message: issue.message }))
			);
		}
		throw error;
	}
}
