import { describe, expect, test } from 'vitest';
import { applyRelation, type StarPhotometry } from './apply';
import { combineHostDistance } from './host-distance';
import { hostDistanceBatch, type HostBatchInput } from './host-batch';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';
import type { Relation } from './types';
import { INVENTED_V_BAND } from '../../../tests/fixtures/invented-v-band';

const vBand = INVENTED_V_BAND;

function columnsOf(stars: StarPhotometry[]): HostBatchInput {
	const column = (pick: (star: StarPhotometry) => number | null | undefined) =>
		Float64Array.from(stars, (star) => pick(star) ?? Number.NaN);
	return {
		ids: stars.map((star) => star.id),
		periodDays: column((s) => s.periodDays),
		mag: column((s) => s.mag),
		magErr: column((s) => s.magErr),
		ebv: column((s) => s.ebv),
		ebvErr: column((s) => s.ebvErr),
		feh: column((s) => s.feh),
		fehErr: column((s) => s.fehErr)
	};
}

/** Deterministic invented host with gaps in reddening and metallicity, one far outlier, one long period. */
function inventedHost(n: number): StarPhotometry[] {
	return Array.from({ length: n }, (_, i) => ({
		id: `s${i}`,
		periodDays: 2.5 + ((i * 7919) % 600) / 10,
		mag: 25 + ((i * 104729) % 13) * 0.03 + (i === 17 ? 2 : 0),
		magErr: 0.03 + (i % 3) * 0.01,
		ebv: i % 5 === 0 ? null : 0.05 + (i % 4) * 0.03,
		ebvErr: 0.01,
		feh: i % 6 === 0 ? null : -0.5 + (i % 9) * 0.1,
		fehErr: 0.05
	}));
}

describe('the host batch reproduces applyRelation + combineHostDistance', () => {
	test('per-star M, μ0, distances and warnings, and the clipped combination, to 1e-12 (the engine’s object path)', () => {
		const stars = inventedHost(300);
		const reference = applyRelation(vBand, stars).stars;
		// Stars without [Fe/H] take the pivot; the error of that assumption is the relation's [Fe/H] range
		// (−0.6 to 0.4) read as uniform, σ = 1/√12 dex, a shared term in both paths.
		const pivotAssumption = { error: 1 / Math.sqrt(12), conversionError: 0, assumed: 'pivot' as const };
		const host = combineHostDistance(vBand, reference, { budget: { metallicity: pivotAssumption } });
		const batch = hostDistanceBatch(vBand, columnsOf(stars));
		expect(batch.combined.errorBudget.map((term) => term.id)).toEqual(['relation_coefficients', 'host_metallicity']);
		expect(batch.combined.assumedMetallicityCount).toBe(host.assumedMetallicityCount);
		expect(batch.combined.assumedMetallicityCount).toBeGreaterThan(20);
		expect(batch.warnings.map((w) => w.code)).toContain('metallicity_assumed');
		reference.forEach((star, i) => {
			expect(Math.abs(batch.absMag[i] - star.absoluteMagnitude.value)).toBeLessThan(1e-12);
			expect(Math.abs(batch.absMagErr[i] - star.absoluteMagnitude.error)).toBeLessThan(1e-12);
			expect(Math.abs(batch.mu0[i] - star.mu0.value)).toBeLessThan(1e-12);
			expect(Math.abs(batch.mu0Err[i] - star.mu0.error)).toBeLessThan(1e-12);
			expect(batch.distanceMpc[i] / (star.distancePc.value / 1e6) - 1).toBeLessThan(1e-12);
			expect(batch.starWarnings[i].map((w) => w.code)).toEqual(
				expect.arrayContaining(star.warnings.map((w) => w.code))
			);
		});
		expect(Math.abs(batch.combined.mu0.value - host.mu0.value)).toBeLessThan(1e-12);
		expect(Math.abs(batch.combined.mu0.statistical - host.mu0.statistical)).toBeLessThan(1e-14);
		expect(Math.abs(batch.combined.mu0.systematic - host.mu0.systematic)).toBeLessThan(1e-14);
		expect(batch.combined.rejected.map((r) => r.star)).toEqual(host.rejected.map((r) => r.star));
		expect(batch.combined.rejected.map((r) => r.star)).toContain('s17');
		expect(batch.combined.nUsed).toBe(host.nUsed);
		expect(batch.combined.iterations).toBe(host.iterations);
		expect(batch.combined.reducedChiSquare).toBeCloseTo(host.reducedChiSquare!, 12);
		expect(Array.from(batch.rejectedMask).filter(Boolean)).toHaveLength(host.rejected.length);
	});

	test('extrapolation, missing reddening and a population mismatch are warned per star; mixing populations for the request', () => {
		const stars = inventedHost(4).map((star, i) => ({
			...star,
			periodDays: i === 0 ? 150 : star.periodDays,
			ebv: i === 1 ? null : 0.1
		}));
		const batch = hostDistanceBatch(vBand, {
			...columnsOf(stars),
			populations: ['classical_fundamental', 'classical_fundamental', 'type2_w_vir', null]
		});
		expect(batch.starWarnings[0].map((w) => w.code)).toEqual(
			expect.arrayContaining(['outside_validity_range', 'period_long_period_variable'])
		);
		expect(batch.starWarnings[0].find((w) => w.code === 'outside_validity_range')!.message).toContain('extrapolated');
		expect(batch.starWarnings[1].map((w) => w.code)).toContain('reddening_missing');
		expect(batch.starWarnings[2].map((w) => w.code)).toContain('population_mismatch');
		expect(batch.warnings.map((w) => w.code)).toContain('mixed_populations');
	});
});

const galacticReason = hasReferenceData('galactic-calibrators')
	? ''
	: ` (skipped: ${missingReason('galactic-calibrators')})`;
describe.skipIf(!hasReferenceData('galactic-calibrators'))(`Galactic Cepheids${galacticReason}`, () => {
	test('Madore, Freedman & Moak 2017 (ApJ 842, 42) V relation on 59_madore.csv: the batch equals the engine and their HST moduli (mean offset < 0.1 mag)', () => {
		const [header, ...lines] = readReferenceFile('galactic-calibrators', '59_madore.csv').trim().split('\n');
		const names = header.split(',');
		const rows = lines.map((line) => Object.fromEntries(line.split(',').map((value, i) => [names[i], value])));
		const relation: Relation = {
			...vBand,
			coefficients: { zeroPoint: -3.944, slope: -2.67, metallicityTerm: null },
			covariance: {
				axes: ['zero_point', 'slope'],
				matrix: [
					[0.028 ** 2, 0],
					[0, 0.095 ** 2]
				]
			},
			validity: { logPeriodMin: 0.3, logPeriodMax: 1.8, fehMin: null, fehMax: null }
		};
		const stars = rows.map((row) => ({
			id: row.name,
			periodDays: 10 ** Number(row.logP),
			mag: Number(row.V_mag),
			magErr: 0.01,
			ebv: Number(row.EBV),
			ebvErr: 0
		}));
		const reference = applyRelation(relation, stars).stars;
		const batch = hostDistanceBatch(relation, columnsOf(stars), { clipSigma: null });
		const residuals = reference.map((star, i) => {
			expect(Math.abs(batch.mu0[i] - star.mu0.value)).toBeLessThan(1e-12);
			return batch.mu0[i] - Number(rows[i].HST);
		});
		expect(batch.mu0).toHaveLength(59);
		expect(Math.abs(residuals.reduce((a, b) => a + b, 0) / residuals.length)).toBeLessThan(0.1);
	});
});
