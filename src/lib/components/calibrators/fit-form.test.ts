import { describe, expect, test } from 'vitest';
import { fitCautions, SMALL_SAMPLE } from './fit-cautions';
import { defaultValues, fitRequestFromValues, valuesFromRequest } from './fit-form';

describe('fit form → fit request', () => {
	const base = defaultValues('kestrel-set@3', 'W_VI', 'classical_fundamental', 'host');

	test('a chosen Wesenheit R needs its reason; a fixed slope error needs its slope; both reach the request', () => {
		const started = performance.now();
		const missing = fitRequestFromValues({ ...base, wesenheitRatio: '1.387' }, 'host');
		expect(missing).toEqual({ ok: false, errors: { wesenheitRatioReason: expect.stringContaining('Say why') } });
		const lonely = fitRequestFromValues({ ...base, fixedSlopeError: '0.05' }, 'host');
		expect(lonely).toEqual({ ok: false, errors: { fixedSlopeError: expect.stringContaining('fixed slope') } });
		const built = fitRequestFromValues(
			{
				...base,
				wesenheitRatio: '1.387',
				wesenheitRatioReason: 'CCM89, R_V = 3.1',
				fixedSlope: '-3.3',
				fixedSlopeError: '0.05'
			},
			'host'
		);
		expect(built.ok && built.request).toMatchObject({
			wesenheit_ratio: { value: 1.387, reason: 'CCM89, R_V = 3.1' },
			fixed_slope: -3.3,
			fixed_slope_error: 0.05
		});
		if (built.ok)
			expect(valuesFromRequest(built.request)).toMatchObject({ wesenheitRatio: '1.387', fixedSlopeError: '0.05' });
		console.log(`fit form systematics: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('a default form is a weighted fit of the whole revision', () => {
		const built = fitRequestFromValues(base, 'host');
		expect(built).toEqual({
			ok: true,
			request: expect.objectContaining({
				calibrator_set: 'kestrel-set',
				revision: 3,
				method: 'wls',
				anchor: 'host',
				clipping: null,
				bootstrap: null,
				period_filter: { log_period_min: null, log_period_max: null }
			})
		});
	});

	test('options become the request, and the request gives the same form back', () => {
		const values = {
			...base,
			clipping: true,
			clipSigma: '2.5',
			clipIterations: '4',
			logPeriodMin: '0.5',
			bootstrapResamples: '300',
			bootstrapSeed: '42'
		};
		const built = fitRequestFromValues(values, 'host');
		if (!built.ok) throw new Error('expected a request');
		expect(built.request.clipping).toEqual({ sigma: 2.5, max_iterations: 4 });
		expect(built.request.bootstrap).toEqual({ resamples: 300, seed: 42, level: 0.68 });
		expect(valuesFromRequest(built.request)).toMatchObject({
			clipSigma: '2.5',
			logPeriodMin: '0.5',
			bootstrapResamples: '300'
		});
	});

	test.each([
		[{ logPeriodMin: 'one' }, 'logPeriodMin'],
		[{ logPeriodMin: '1.2', logPeriodMax: '0.8' }, 'logPeriodMax'],
		[{ clipping: true, clipSigma: '-1' }, 'clipSigma'],
		[{ bootstrapResamples: '2.5' }, 'bootstrapResamples'],
		[{ revision: 'no-revision' }, 'revision']
	])('%o is refused at %s', (change, field) => {
		const built = fitRequestFromValues({ ...base, ...change }, 'host');
		expect(built.ok).toBe(false);
		if (!built.ok) expect(Object.keys(built.errors)).toContain(field);
	});
});

describe('fit cautions', () => {
	const clean = {
		nUsed: 40,
		nTotal: 40,
		validity: { log_period_min: 0.4, log_period_max: 1.8 },
		warnings: [],
		excluded: [],
		requested: { logPeriodMin: null, logPeriodMax: null, fundamentalise: false }
	};

	test('a fit inside its calibrators with enough stars has none', () => {
		expect(fitCautions(clean)).toEqual([]);
	});

	test('a period range beyond the calibrators, a small sample and mixed populations are each named', () => {
		const codes = fitCautions({
			...clean,
			nUsed: SMALL_SAMPLE - 1,
			warnings: [{ code: 'mixed_populations', message: 'fit mixes 2 populations' }],
			requested: { logPeriodMin: null, logPeriodMax: 2.2, fundamentalise: false }
		}).map((caution) => caution.code);
		expect(codes).toEqual(['mixed_populations', 'period_range_beyond_calibrators', 'small_sample']);
	});
});
