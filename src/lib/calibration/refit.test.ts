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
			expect(result.rejected.length).toBeGreaterThan(0);
			expect(result.rejected.every((rejection) => Math.abs(rejection.standardizedResidual) > 3)).toBe(true);
		});
	}
);
