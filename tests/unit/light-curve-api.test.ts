import { describe, expect, test } from 'vitest';
import { AnalyseRequestSchema, ANALYSE_LIMITS } from '../../src/lib/server/api/light-curve-schemas';
import { fieldErrorsOf, requestPath } from '../../src/lib/server/light-curves/http';
import { batchOfRequest, runsInBackground, SYNCHRONOUS_LIMITS } from '../../src/lib/server/light-curves/jobs';

/** Invented series: `n` points of a sinusoid with P = 2.5 d. */
const series = (id: string, n = 12, extra: Record<string, unknown> = {}) => ({
	id,
	band: 'V',
	time_reference: 'HJD',
	time_offset_days: 2450000,
	points: Array.from({ length: n }, (_, i) => [i * 0.37, 15 + 0.3 * Math.sin((2 * Math.PI * i * 0.37) / 2.5), 0.01]),
	...extra
});

const errorsOf = (body: unknown) => {
	const parsed = AnalyseRequestSchema.safeParse(body);
	expect(parsed.success).toBe(false);
	return parsed.success ? [] : fieldErrorsOf(parsed.error);
};

describe('analyse request validation', () => {
	test('paths index the request the way a client does', () => {
		expect(requestPath(['series', 3, 'points', 17, 1])).toBe('series[3].points[17][1]');
		expect(requestPath(['max_period_days'])).toBe('max_period_days');
	});

	test.each([
		{
			case: 'text in a magnitude',
			change: (s: ReturnType<typeof series>) => (s.points[4][1] = 'bright' as never),
			path: 'series[1].points[4][1]'
		},
		{
			case: 'a negative error',
			change: (s: ReturnType<typeof series>) => (s.points[7][2] = -0.02),
			path: 'series[1].points[7][2]'
		},
		{
			case: 'a point of two values',
			change: (s: ReturnType<typeof series>) => (s.points[2] = [1, 2]),
			path: 'series[1].points[2]'
		}
	])('$case is named by series, point and column', ({ change, path }) => {
		const bad = series('KCS-B');
		change(bad);
		expect(errorsOf({ series: [series('KCS-A'), bad] }).map((error) => error.path)).toEqual([path]);
	});

	test('an unknown time reference, a short series and a reversed period range are named', () => {
		const errors = errorsOf({
			series: [series('KCS-A', 12, { time_reference: 'TJD' }), series('KCS-B', 4)],
			min_period_days: 5,
			max_period_days: 2
		});
		expect(errors.map((error) => error.path).sort()).toEqual([
			'max_period_days',
			'series[0].time_reference',
			'series[1].points'
		]);
	});

	test('the size caps hold and the synchronous threshold is where it says', () => {
		const many = Array.from({ length: ANALYSE_LIMITS.maxSeries + 1 }, (_, i) => series(`KCS-${i}`));
		expect(errorsOf({ series: many }).map((error) => error.path)).toEqual(['series']);
		const small = AnalyseRequestSchema.parse({
			series: Array.from({ length: SYNCHRONOUS_LIMITS.series }, (_, i) => series(`S${i}`))
		});
		expect(runsInBackground(small)).toBe(false);
		const large = AnalyseRequestSchema.parse({
			series: Array.from({ length: SYNCHRONOUS_LIMITS.series + 1 }, (_, i) => series(`L${i}`))
		});
		expect(runsInBackground(large)).toBe(true);
		const dense = AnalyseRequestSchema.parse({ series: [series('D', SYNCHRONOUS_LIMITS.points + 1)] });
		expect(runsInBackground(dense)).toBe(true);
	});

	test('defaults: offset 0, classical fundamental population, no band', () => {
		const { band: _band, time_offset_days: _offset, ...bare } = series('KCS-A');
		const [parsed] = batchOfRequest(AnalyseRequestSchema.parse({ series: [bare] }));
		expect(parsed).toMatchObject({ id: 'KCS-A', band: null, timeOffsetDays: 0, population: 'classical_fundamental' });
	});
});
