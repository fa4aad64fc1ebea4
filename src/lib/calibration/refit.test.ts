import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';
import { parseCalibratorTable, toCalibratorRows } from './calibrator-table/index';
import { relationVersionDigest, sealRelationVersion, verifyDigest } from './digest';
import { syntheticCalibrators } from './fit/index';
import { runRefit, versionContentFromRefit, type RefitSpec } from './refit';
import { CalibrationInputError } from './types';
import type { CalibratorRow } from './calibrators';

const BASE_SPEC: RefitSpec = {
	bandId: 'W_VI',
	population: 'classical_fundamental',
	anchor: 'host',
	form: 'period_luminosity',
	method: 'ols',
	pivotLogPeriod: 1,
	pivotFeh: 0,
	periodFilter: { logPeriodMin: null, logPeriodMax: null },
	fundamentalise: false,
	fixedSlope: null,
	fixedZeroPoint: null,
	clipping: { sigma: 3, maxIterations: 10 },
	extinctionLaw: null,
	rV: null,
	parallaxOffset: null,
	bootstrap: null,
	weightedCovariance: 'absolute',
	assumedIntrinsicScatter: null
};

const IDENTITY = {
	slug: 'demo-w-vi',
	version: 1,
	magnitudeSystem: 'Vega' as const,
	calibratorSet: { slug: 'demo-set', revision: 1, digest: `sha256:${'0'.repeat(64)}` },
	approvedBy: [{ name: 'Invented Reviewer', orcid: null }],
	approvedAt: '2026-12-01T12:00:00Z'
};

/** Invented calibrators at an invented host (μ = 18.5), generated from a known relation. */
function inventedHostRows(): CalibratorRow[] {
	const points = syntheticCalibrators({ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.08 }, { count: 80, seed: 7 });
	return points.map((point) => ({
		star: point.star,
		population: 'classical_fundamental',
		periodDays: 10 ** point.logPeriod,
		mags: { W_VI: { value: point.absMag + 18.5, error: point.absMagErr } },
		muHost: 18.5,
		muHostErr: 0.03,
		host: 'Invented Host'
	}));
}

describe('refit', () => {
	test('a host-anchored refit recovers the generating relation and carries the host error as a systematic', () => {
		const result = runRefit(inventedHostRows(), { ...BASE_SPEC, method: 'ml_scatter' });
		expect(Math.abs(result.coefficients.zeroPoint + 5.9)).toBeLessThan(5 * result.errors.zeroPoint!);
		expect(Math.abs(result.coefficients.slope + 3.3)).toBeLessThan(5 * result.errors.slope!);
		expect(result.intrinsicScatterSource).toBe('maximum_likelihood');
		expect(result.systematics).toEqual([
			expect.objectContaining({ kind: 'host_distance', host: 'Invented Host', error: 0.03 })
		]);
		expect(result.residuals).toHaveLength(80);
		for (const residual of result.residuals) {
			expect(residual.residual).toBeCloseTo(residual.absMag! - residual.predictedMag, 12);
		}
	});

	test('the frozen content of a refit validates, and the same inputs give the same digest', () => {
		const first = versionContentFromRefit(runRefit(inventedHostRows(), BASE_SPEC), IDENTITY);
		const second = versionContentFromRefit(runRefit(inventedHostRows(), BASE_SPEC), IDENTITY);
		expect(relationVersionDigest(first)).toBe(relationVersionDigest(second));
		expect(verifyDigest(sealRelationVersion(first)).ok).toBe(true);
		expect(first.fit).toMatchObject({
			method: 'ols',
			anchor: 'host',
			clipping: { sigma: 3, max_iterations: 10 },
			bootstrap: null
		});
		const changed = versionContentFromRefit(
			runRefit(inventedHostRows(), { ...BASE_SPEC, pivotLogPeriod: 0.9 }),
			IDENTITY
		);
		expect(relationVersionDigest(changed)).not.toBe(relationVersionDigest(first));
	});

	test('a bootstrap is recorded with its generator and seed', () => {
		const result = runRefit(inventedHostRows(), {
			...BASE_SPEC,
			method: 'wls',
			bootstrap: { resamples: 200, seed: 42, level: 0.68 }
		});
		const content = versionContentFromRefit(result, IDENTITY);
		expect(content.fit.bootstrap).toEqual({ resamples: 200, generator: 'xoroshiro128plus', seed: 42, level: 0.68 });
		expect(result.intrinsicScatterSource).toBe('excess_scatter');
		// Generated with σ_int = 0.08: the scatter beyond the stated errors lands near it.
		expect(result.intrinsicScatter).toBeGreaterThan(0.04);
		expect(result.intrinsicScatter).toBeLessThan(0.12);
	});

	test('engine 2 content records systematics, fit quality and R; engine 1.0.0 content is rebuilt as it was', () => {
		const started = performance.now();
		const result = runRefit(inventedHostRows(), { ...BASE_SPEC, method: 'wls', clipping: null });
		const current = versionContentFromRefit(result, IDENTITY);
		expect(current.engine_version).toBe('2.0.0');
		expect(current.systematics?.terms.map((term) => term.id)).toEqual(['anchor_distance']);
		expect(current.systematics!.terms[0].effect.zero_point).toBeCloseTo(-0.03, 12);
		expect(current.fit_quality).toEqual({
			reduced_chi_square: result.reducedChiSquare,
			degrees_of_freedom: 78,
			covariance_scaled: false,
			errors_too_small: result.fitQuality.errorsTooSmall
		});
		expect(current.wesenheit_ratio).toBe(1.55);
		const old = versionContentFromRefit(result, IDENTITY, '1.0.0');
		expect(old.engine_version).toBe('1.0.0');
		expect(Object.keys(old)).not.toContain('systematics');
		expect(Object.keys(old)).not.toContain('fit_quality');
		expect(Object.keys(old)).not.toContain('wesenheit_ratio');
		expect(Object.keys(old.fit)).not.toContain('intrinsic_scatter_estimator');
		expect(current.fit.intrinsic_scatter_estimator).toBeNull();
		const { systematics: _s, fit_quality: _q, wesenheit_ratio: _r, ...rest } = current;
		const { intrinsic_scatter_estimator: _e, ...fit } = current.fit;
		expect({ ...rest, fit, engine_version: '1.0.0' }).toEqual(old);
		console.log(`engine shapes from one refit: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('an ml_scatter version records which estimator gave σ_int; REML lands above ML on the same stars', () => {
		const fitWith = (estimator: 'ml' | 'reml') =>
			runRefit(inventedHostRows(), {
				...BASE_SPEC,
				method: 'ml_scatter',
				clipping: null,
				intrinsicScatterEstimator: estimator
			});
		const reml = versionContentFromRefit(fitWith('reml'), IDENTITY);
		const ml = versionContentFromRefit(fitWith('ml'), IDENTITY);
		expect(reml.fit.intrinsic_scatter_estimator).toBe('reml');
		expect(ml.fit.intrinsic_scatter_estimator).toBe('ml');
		// REML removes the (n − p)/n shrinkage of ML (Patterson & Thompson 1971), so on one sample it is larger.
		expect(reml.intrinsic_scatter).toBeGreaterThan(ml.intrinsic_scatter);
		expect(relationVersionDigest(reml)).not.toBe(relationVersionDigest(ml));
		// Engine 1 knew only ML and recorded no estimator.
		expect(Object.keys(versionContentFromRefit(fitWith('ml'), IDENTITY, '1.0.0').fit)).not.toContain(
			'intrinsic_scatter_estimator'
		);
	});

	test('WLS with errors far too small: covariance scaled, fit_quality and a warning with the numbers', () => {
		// Errors shrunk tenfold: χ²/dof ≈ 100 (the scatter is σ_int = 0.08 ≫ 0.005-ish errors).
		const rows = inventedHostRows().map((row) => ({
			...row,
			mags: { W_VI: { value: row.mags.W_VI!.value, error: row.mags.W_VI!.error / 10 } }
		}));
		const result = runRefit(rows, {
			...BASE_SPEC,
			method: 'wls',
			clipping: null,
			weightedCovariance: 'reduced_chi_square_above_one'
		});
		expect(result.fitQuality.errorsTooSmall).toBe(true);
		expect(result.fitQuality.covarianceScaled).toBe(true);
		expect(result.warnings).toContainEqual(
			expect.objectContaining({ code: 'errors_too_small', field: 'reduced_chi_square' })
		);
		const content = versionContentFromRefit(result, IDENTITY);
		expect(content.fit.weighted_covariance).toBe('reduced_chi_square_above_one');
		expect(content.fit_quality).toMatchObject({ covariance_scaled: true, errors_too_small: true });
		const absolute = runRefit(rows, { ...BASE_SPEC, method: 'wls', clipping: null, weightedCovariance: 'absolute' });
		expect(absolute.fitQuality.covarianceScaled).toBe(false);
		expect(absolute.errors.zeroPoint! * Math.sqrt(result.reducedChiSquare!)).toBeCloseTo(result.errors.zeroPoint!, 12);
	});

	test('an adopted slope with its error is a systematic moving the zero point by −σ_b·⟨log P − p0⟩_w', () => {
		// With b fixed, â = Σw(y − b·x)/Σw, so ∂a/∂b = −Σw·x/Σw (weighted least squares, common practice).
		const rows = inventedHostRows().map((row) => ({ ...row, muHostErr: 0 }));
		const spec = { ...BASE_SPEC, clipping: null, fixedSlope: -3.3, fixedSlopeError: 0.05 };
		const result = runRefit(rows, spec);
		const x = rows.map((row) => Math.log10(row.periodDays) - 1);
		const meanX = x.reduce((sum, value) => sum + value, 0) / x.length;
		const term = result.calibrationSystematics.find((t) => t.id === 'fixed_slope')!;
		expect(term).toMatchObject({ value: -3.3, error: 0.05 });
		expect(term.effect.slope).toBeCloseTo(0.05, 12);
		expect(term.effect.zeroPoint).toBeCloseTo(-0.05 * meanX, 10);
		expect(result.calibrationSystematics.find((t) => t.id === 'anchor_distance')?.effect.zeroPoint).toBe(0);
		const without = runRefit(rows, { ...spec, fixedSlopeError: null });
		expect(without.warnings).toContainEqual(expect.objectContaining({ code: 'fixed_slope_error_missing' }));
		expect(without.calibrationSystematics.map((t) => t.id)).toEqual(['anchor_distance']);
	});

	test('a chosen Wesenheit R needs a reason, is recorded and warned about; a single band has none', () => {
		const rows: CalibratorRow[] = inventedHostRows().map((row) => ({
			...row,
			mags: {
				Ic: { value: row.mags.W_VI!.value + 1.55, error: 0.02 },
				V: { value: row.mags.W_VI!.value + 2.55, error: 0.02 }
			}
		}));
		const chosen = runRefit(rows, { ...BASE_SPEC, wesenheitRatio: { value: 1.387, reason: 'CCM89, R_V = 3.1' } });
		expect(chosen.wesenheitRatio).toBe(1.387);
		expect(chosen.warnings).toContainEqual(
			expect.objectContaining({ code: 'wesenheit_ratio_chosen', message: expect.stringContaining('CCM89, R_V = 3.1') })
		);
		const catalogue = runRefit(rows, BASE_SPEC);
		// V − I = 1 for every star, so the zero point moves by exactly ΔR·(V − I) = 0.163.
		expect(chosen.coefficients.zeroPoint - catalogue.coefficients.zeroPoint).toBeCloseTo(0.163, 10);
		expect(() => runRefit(rows, { ...BASE_SPEC, wesenheitRatio: { value: 1.387, reason: ' ' } })).toThrow(
			/wesenheitRatio.reason/
		);
	});

	test('parallax anchor: the adopted zero point is frozen with ∂θ/∂ZP·σ, equal to refitting with ZP + σ', () => {
		// Invented stars 0.4–2 kpc away; ∂θ/∂ZP from the Jacobian is checked against a finite difference.
		const points = syntheticCalibrators(
			{ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.05 },
			{ count: 40, seed: 11 }
		);
		const rows: CalibratorRow[] = points.map((point, i) => {
			const parallax = 2.5 - (i % 20) * 0.1;
			return {
				star: point.star,
				population: 'classical_fundamental',
				periodDays: 10 ** point.logPeriod,
				mags: { W_VI: { value: point.absMag + 10 - 5 * Math.log10(parallax), error: 0.03 } },
				parallaxMas: parallax + 0.02,
				parallaxErrMas: 0.02
			};
		});
		const spec: RefitSpec = {
			...BASE_SPEC,
			anchor: 'parallax',
			method: 'parallax_space',
			clipping: null,
			assumedIntrinsicScatter: 0.05,
			parallaxOffset: { mode: 'given', value: 0.02, error: 0.01 }
		};
		const result = runRefit(rows, spec);
		const term = result.calibrationSystematics.find((t) => t.id === 'parallax_zero_point')!;
		expect(term).toMatchObject({ value: 0.02, error: 0.01 });
		const moved = runRefit(rows, { ...spec, parallaxOffset: { mode: 'given', value: 0.03, error: 0.01 } });
		const shift = moved.coefficients.zeroPoint - result.coefficients.zeroPoint;
		// A larger zero point makes every star farther and so brighter: a decreases.
		expect(shift).toBeLessThan(0);
		expect(Math.abs(term.effect.zeroPoint / shift - 1)).toBeLessThan(0.02);
		expect(result.warnings.map((w) => w.code)).not.toContain('parallax_zero_point_missing');
		const inverted = runRefit(rows, { ...spec, method: 'wls', assumedIntrinsicScatter: null });
		const invertedTerm = inverted.calibrationSystematics.find((t) => t.id === 'parallax_zero_point')!;
		expect(Math.abs(invertedTerm.effect.zeroPoint / term.effect.zeroPoint - 1)).toBeLessThan(0.1);
		const none = runRefit(rows, { ...spec, parallaxOffset: null });
		expect(none.warnings.map((w) => w.code)).toContain('parallax_zero_point_missing');
	});

	test.each([
		[{ method: 'parallax_space' as const }, 'method'],
		[{ parallaxOffset: { mode: 'fitted' as const, value: 0, error: 0.01 } }, 'parallaxOffset'],
		[{ fundamentalise: true, population: 'type2_w_vir' as const }, 'fundamentalise'],
		[{ periodFilter: { logPeriodMin: 1.5, logPeriodMax: 1.0 } }, 'periodFilter']
	])('an inconsistent spec is refused, naming the field (%o)', (change, field) => {
		const attempt = () => runRefit(inventedHostRows(), { ...BASE_SPEC, ...change });
		expect(attempt).toThrow(CalibrationInputError);
		try {
			attempt();
		} catch (error) {
			expect((error as CalibrationInputError).issues.map((issue) => issue.field)).toContain(field);
		}
	});
});

const OGLE = 'ogle-magellanic-cepheids';
describe.skipIf(!hasReferenceData(OGLE))(
	hasReferenceData(OGLE) ? 'refit from an uploaded table of real Cepheids' : missingReason(OGLE),
	() => {
		test('OGLE-IV LMC fundamental-mode W_I through upload → refit matches the published relation made absolute', () => {
			// Source: ogle-magellanic-cepheids/lmccephdata.csv (OGLE-IV, Soszyński et al. 2015), columns id, mode,
			// RA, Dec, I, V, V−I, P. Published: W_I = −3.314 log P + 15.892 (Soszyński et al. 2008, from memory);
			// LMC μ = 18.477 ± 0.026 (Pietrzyński et al. 2019, from memory). Expected at pivot log P = 1:
			// a = 15.892 − 3.314 − 18.477 = −5.899, b = −3.314. The table is built in memory as an upload.
			const lines = readReferenceFile(OGLE, 'lmccephdata.csv').trim().split(/\r?\n/);
			const rows = lines
				.map((line) => line.split(','))
				.filter((cells) => cells[1] === 'F' && cells[4] !== '-99.99' && cells[5] !== '-99.99')
				.map(([id, , , , i, v, , period]) => `${id},classical_fundamental,${period},${i},${v},18.477,0.026,LMC`);
			const csv = ['star,population,period_days,mag_Ic,mag_V,mu_host,mu_host_err,host', ...rows].join('\n');
			const table = parseCalibratorTable(csv, {}, { maxRows: 10_000, maxColumns: 20, maxCellLength: 100 });
			expect(table.issues).toEqual([]);
			const result = runRefit(toCalibratorRows(table.rows), BASE_SPEC);
			expect(result.nUsed).toBeGreaterThan(2000);
			expect(Math.abs(result.coefficients.slope + 3.314)).toBeLessThan(0.01);
			expect(Math.abs(result.coefficients.zeroPoint + 5.899)).toBeLessThan(0.01);
			// The LMC distance error is shared by every star: a systematic, not in the covariance.
			expect(result.systematics).toEqual([expect.objectContaining({ kind: 'host_distance', error: 0.026 })]);
			expect(Math.sqrt(result.covariance.matrix[0][0])).toBeLessThan(0.01);
			// Frozen: the anchor moves the zero point by exactly −0.026 for +1σ and nothing else (M = m − μ),
			// and the covariance stays statistical, so a consumer adds 0.026² to σ_a² once.
			const content = versionContentFromRefit(result, IDENTITY);
			expect(content.systematics?.terms).toEqual([
				{
					id: 'anchor_distance',
					label: 'LMC distance modulus 18.477 ± 0.026 mag',
					value: 18.477,
					error: 0.026,
					effect: { zero_point: expect.any(Number), slope: expect.any(Number), metallicity_term: null }
				}
			]);
			const [term] = content.systematics!.terms;
			expect(Math.abs(term.effect.zero_point + 0.026)).toBeLessThan(1e-9);
			expect(Math.abs(term.effect.slope)).toBeLessThan(1e-9);
			expect(content.covariance.matrix[0][0]).toBe(result.covariance.matrix[0][0]);
			expect(content.wesenheit_ratio).toBe(1.55);
			expect(result.rejected.length).toBeGreaterThan(0);
			expect(result.rejected.every((rejection) => Math.abs(rejection.standardizedResidual) > 3)).toBe(true);
		});
	}
);
