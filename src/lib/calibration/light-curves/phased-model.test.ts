import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { analyseLightCurve } from './light-curve-analysis';
import { modelCurve, modelMagnitude, phasedModel, phasePoints, thinPeriodogram } from './phased-model';
import type { LightCurvePoint, LightCurveSeries } from './series';

// Light curve: OGLE-III I band (Soszyński et al. 2008, AcA 58, 163), read in place.
describe.skipIf(!hasReferenceData('light-curves'))(
	`phased model of an OGLE Cepheid — ${missingReason('light-curves')}`,
	() => {
		const points = readReferenceFile('light-curves', 'OGLE-LMC-CEP-0674.dat')
			.trim()
			.split('\n')
			.map((line) => line.trim().split(/\s+/).map(Number) as unknown as LightCurvePoint);
		const series: LightCurveSeries = {
			id: 'OGLE-LMC-CEP-0674',
			band: 'Ic',
			timeReference: 'HJD',
			timeOffsetDays: 2450000,
			points
		};
		const analysis = analyseLightCurve(series, { includePeriodogram: true });
		const model = phasedModel(series, analysis);

		test('phase zero is maximum light, and the model keeps the analysis amplitude and magnitude mean', () => {
			const curve = modelCurve(model, 1000);
			const brightest = curve.reduce((best, point) => (point.mag < best.mag ? point : best));
			expect(Math.min(brightest.phase, 1 - brightest.phase)).toBeLessThan(0.002);
			const faintest = Math.max(...curve.map((point) => point.mag));
			expect(faintest - brightest.mag).toBeCloseTo(analysis.amplitude, 3);
			expect(model.coefficients[0]).toBeCloseTo(analysis.meanMagMagnitude.value, 6);
		});

		test('folded points lie on the model within their residual scatter', () => {
			const folded = phasePoints(series, model);
			const squares = folded.reduce((sum, point) => sum + (point.mag - modelMagnitude(model, point.phase)) ** 2, 0);
			expect(Math.sqrt(squares / folded.length)).toBeCloseTo(analysis.residualRms, 6);
			expect(folded.every((point) => point.phase >= 0 && point.phase < 1)).toBe(true);
		});

		test('thinning the periodogram keeps the highest peak at its own height and frequency', () => {
			const full = analysis.periodogram!;
			const thin = thinPeriodogram(full, 500);
			expect(thin.frequency.length).toBeLessThanOrEqual(500);
			const top = full.power.indexOf(Math.max(...full.power));
			const thinTop = thin.power.indexOf(Math.max(...thin.power));
			expect(thin.power[thinTop]).toBe(full.power[top]);
			expect(thin.frequency[thinTop]).toBeCloseTo((full.firstIndex + top) * full.step, 12);
		});
	}
);
