import { Validator } from '@seriousme/openapi-schema-validator';
import { expect, test } from '@playwright/test';
import { expectMatchesOpenApi } from './support/openapi-contract';

test('the OpenAPI document served by the app is valid OpenAPI 3.1 and lists the registry and H0 routes', async ({
	request
}) => {
	const response = await request.get('/api/v1/openapi.json');
	expect(response.status()).toBe(200);
	const document = await response.json();
	const result = await new Validator().validate(document);
	expect(result.valid, JSON.stringify(result.errors)).toBe(true);
	expect(Object.keys(document.paths)).toEqual(
		expect.arrayContaining(['/api/v1/hubble', '/api/v1/fits', '/api/v1/proposals/{id}/reviews'])
	);
	expect(document.components.schemas).toHaveProperty('HubbleRequest');
});

test('POST /api/v1/hubble answers H0 with its error budget, and problem+json for bad input', async ({ request }) => {
	const ok = await request.post('/api/v1/hubble', {
		data: {
			distance_mpc: 16.5,
			distance_mpc_err: 0.8,
			velocity_km_s: 1200,
			velocity_km_s_err: 10,
			velocity_frame: 'heliocentric'
		}
	});
	expect(ok.status()).toBe(200);
	await expectMatchesOpenApi(request, ok, 'POST /api/v1/hubble');
	const body = await ok.json();
	expect(body.h0).toBeCloseTo(1200 / 16.5, 9);
	expect(body.cautions[0].code).toBe('peculiar_velocity');

	const bad = await request.post('/api/v1/hubble', { data: { distance_mpc: -1, distance_mpc_err: 0.8 } });
	expect(bad.status()).toBe(422);
	expect(bad.headers()['content-type']).toContain('application/problem+json');
	await expectMatchesOpenApi(request, bad, 'POST /api/v1/hubble');
	const problem = await bad.json();
	expect(problem.errors.map((error: { path: string }) => error.path)).toEqual(
		expect.arrayContaining(['distance_mpc', 'velocity_frame'])
	);
	const noVelocity = await request.post('/api/v1/hubble', {
		data: { distance_mpc: 16.5, distance_mpc_err: 0.8, velocity_frame: 'cmb' }
	});
	expect(noVelocity.status()).toBe(422);
	expect((await noVelocity.json()).errors.map((error: { path: string }) => error.path)).toContain('velocity_km_s');
});
