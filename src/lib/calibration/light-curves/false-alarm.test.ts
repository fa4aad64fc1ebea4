import { describe, expect, test } from 'vitest';
import { ASTROPY_MISSING_REASON, astropyVersion, hasAstropy, runPython } from '../../../../tests/support/astropy';
import { falseAlarmProbability, singleFrequencyFalseAlarm } from './false-alarm';
import { prepareSeries, weightedTimeVariance, type LightCurvePoint } from './series';

const points: LightCurvePoint[] = Array.from({ length: 150 }, (_, i) => [
	800 * ((i * 0.569840291) % 1),
	14 + 0.05 * Math.sin(i * 1.7),
	0.02 + 0.01 * ((i * 0.618034) % 1)
]);
const series = prepareSeries({ id: 'invented', timeReference: 'JD', timeOffsetDays: 0, points });
const maxFrequency = 3;
const powers = [0.05, 0.1, 0.2, 0.3, 0.5];

describe('Baluev (2008) false-alarm probability', () => {
	test('single-frequency probability is (1 − p)^((N−3)/2) (Baluev 2008, d_K − d_H = 2)', () => {
		expect(singleFrequencyFalseAlarm(0.2, 103)).toBeCloseTo(0.8 ** 50, 15);
	});

	test('falls as the peak power rises and stays in [0, 1]', () => {
		const values = powers.map((power) =>
			falseAlarmProbability({ power, nPoints: 150, maxFrequency, weightedTimeVariance: weightedTimeVariance(series) })
		);
		for (let i = 1; i < values.length; i++) expect(values[i]).toBeLessThan(values[i - 1]);
		expect(values.every((value) => value >= 0 && value <= 1)).toBe(true);
	});

	// Reference: astropy LombScargle.false_alarm_probability(method='baluev'), Debian python3-astropy, same data.
	// The statistics function is called directly: LombScargle.false_alarm_probability first rounds f_max
	// onto its own grid. astropy takes log Γ from scipy, which Debian's astropy does not pull in; Python's math.lgamma stands in.
	test.skipIf(!hasAstropy())(
		`agrees with astropy ${astropyVersion() ?? ''} method='baluev' to 1e-8 relative${hasAstropy() ? '' : ` — ${ASTROPY_MISSING_REASON}`}`,
		() => {
			const reference = runPython<number[]>(
				`import math, types
import numpy as np
if 'scipy' not in sys.modules:
    try:
        import scipy.special
    except ImportError:
        special = types.ModuleType('scipy.special')
        special.gammaln = np.vectorize(math.lgamma)
        sys.modules['scipy'] = types.ModuleType('scipy')
        sys.modules['scipy.special'] = special
from astropy.timeseries.periodograms.lombscargle import _statistics
p = np.array(data['points'])
t = p[:, 0] - p[:, 0].min()
print(json.dumps([float(_statistics.false_alarm_probability(z, fmax=data['fmax'], t=t, y=p[:, 1], dy=p[:, 2], normalization='standard', method='baluev')) for z in data['powers']]))`,
				{ points, fmax: maxFrequency, powers }
			);
			powers.forEach((power, i) => {
				const ours = falseAlarmProbability({
					power,
					nPoints: points.length,
					maxFrequency,
					weightedTimeVariance: weightedTimeVariance(series)
				});
				expect(Math.abs(ours - reference[i])).toBeLessThanOrEqual(1e-8 * reference[i] + 1e-300);
			});
		}
	);
});
