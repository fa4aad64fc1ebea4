import { z } from 'zod';
import {
	CalibrationInputError,
	heliocentricToCmb,
	hubbleConstant,
	recessionVelocity,
	redshiftFromLine,
	type Measured
} from '$lib/calibration';
import { fail } from './errors';
import { registerApiSchema } from './schema-registry';

/** POST /api/v1/hubble: a distance and a velocity (or a measured line) → z, v, H0 and its error budget. */
const OPERATION = 'POST /api/v1/hubble';
const positive = z.number().positive();
const nonNegative = z.number().nonnegative();

export const HubbleRequestSchema = registerApiSchema(
	z
		.object({
			distance_mpc: positive,
			distance_mpc_err: nonNegative,
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
		velocity_frame: z.enum(['heliocentric', 'cmb']),
		velocity_formula: z.enum(['given', 'cz', 'cz_q0']),
		cmb_correction_km_s: z.number().nullable(),
		h0: z.number(),
		h0_err: z.number(),
		error_budget: z.object({ distance: z.number(), velocity: z.number(), peculiar_velocity: z.number() }),
		cautions: z.array(CautionSchema)
	}),
	{ id: 'HubbleResponse', description: 'H0 = v/d with each error term as a fraction of H0.', responseFor: [OPERATION] }
);

export type HubbleRequest = z.infer<typeof HubbleRequestSchema>;
export type HubbleResponse = z.infer<typeof HubbleResponseSchema>;

export function estimateHubble(body: HubbleRequest): HubbleResponse {
	try {
		let z: Measured | null = null;
		let velocity: Measured;
		let formula: HubbleResponse['velocity_formula'] = 'given';
		if (body.observed_wavelength_nm !== undefined) {
			z = redshiftFromLine({
				observedNm: { value: body.observed_wavelength_nm, error: body.observed_wavelength_nm_err ?? 0 },
				medium: body.observed_medium!,
				...(body.rest_wavelength_nm ? { restNm: { value: body.rest_wavelength_nm, error: 0 } } : {})
			});
			const v = recessionVelocity(z, body.velocity_model === 'low_z' ? { q0: body.q0 } : {});
			velocity = v;
			formula = v.formula;
		} else {
			velocity = { value: body.velocity_km_s!, error: body.velocity_km_s_err ?? 0 };
		}
		let correction: number | null = null;
		if (body.ra_deg !== undefined && body.dec_deg !== undefined) {
			const cmb = heliocentricToCmb(velocity, { raDeg: body.ra_deg, decDeg: body.dec_deg });
			correction = cmb.correctionKmS;
			velocity = cmb;
		}
		const estimate = hubbleConstant({
			velocity,
			distanceMpc: { value: body.distance_mpc, error: body.distance_mpc_err },
			peculiarVelocityKmS: body.peculiar_velocity_sigma_km_s
		});
		return {
			z: z?.value ?? null,
			z_err: z?.error ?? null,
			velocity_km_s: velocity.value,
			velocity_km_s_err: velocity.error,
			velocity_frame: correction === null ? 'heliocentric' : 'cmb',
			velocity_formula: formula,
			cmb_correction_km_s: correction,
			h0: estimate.value,
			h0_err: estimate.error,
			error_budget: {
				distance: estimate.budget.distance,
				velocity: estimate.budget.velocity,
				peculiar_velocity: estimate.budget.peculiarVelocity
			},
			cautions: [{ code: estimate.caution.code, message: estimate.caution.message, details: estimate.caution.details }]
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
