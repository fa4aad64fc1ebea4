import { Matrix } from 'ml-matrix';
import { describe, expect, test } from 'vitest';
import { applyRelation, applyRelationColumnar, coefficientVariance, type StarPhotometry } from './apply';
import { bandExtinctionPerEbv, ExtinctionNotApplicableError } from './extinction';
import { CalibrationInputError, type Relation } from './types';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../tests/support/reference-data';
import { INVENTED_V_BAND } from '../../../tests/fixtures/invented-v-band';

const vBand = INVENTED_V_BAND;

/** W_VI relation without a metallicity term. */
const wesenheit: Relation = {
	...vBand,
	bandId: 'W_VI',
	coefficients: { zeroPoint: -5.889, slope: -3.476, metallicityTerm: null },
	covariance: {
		axes: ['zero_point', 'slope'],
		matrix: [
			[0.011 ** 2, 0.0001],
			[0.0001, 0.037 ** 2]
		]
	},
	intrinsicScatter: 0.08,
	extinctionLaw: null,
	rV: null
};

const star: StarPhotometry = {
	id: 'cand-1',
	periodDays: 25,
	mag: 25.1,
	magErr: 0.05,
	ebv: 0.12,
	ebvErr: 0.02,
	feh: -0.3,
	fehErr: 0.1
};

describe('applying a relation', () => {
	test('M, A and μ0 follow M = a + b(log P − p0) + γ([Fe/H] − f0), μ0 = m − A − M (PRODUCT.md relation form)', () => {
		const [result] = applyRelation(vBand, [star]).stars;
		const logP = Math.log10(25);
		const m = -3.944 - 2.67 * (logP - 1) - 0.2 * -0.3;
		const rV = bandExtinctionPerEbv('ccm89', 'V', 3.1);
		expect(result.absoluteMagnitude.value).toBeCloseTo(m, 12);
		expect(result.extinction.value).toBeCloseTo(rV * 0.12, 12);
		expect(result.mu0.value).toBeCloseTo(25.1 - rV * 0.12 - m, 12);
		// CCM89 A_V/E(B−V) = R_V at V (normalised at 0.549 µm): within 3% of 3.1 (CCM89, ApJ 345, 245; common practice).
		expect(rV / 3.1).toBeGreaterThan(0.97);
		expect(rV / 3.1).toBeLessThan(1.03);
		expect(result.distancePc.value).toBeCloseTo(10 ** (result.mu0.value / 5 + 1), 3);
		expect(result.warnings).toEqual([]);
	});

	test('the coefficient term gᵀΣg equals ml-matrix’s product (reference library) and Σ(g) from a Monte Carlo of the coefficients', () => {
		const dLogP = Math.log10(25) - 1;
		const g = new Matrix([[1, dLogP, -0.3]]);
		const reference = g.mmul(new Matrix(vBand.covariance.matrix)).mmul(g.transpose()).get(0, 0);
		expect(coefficientVariance(vBand, dLogP, -0.3)).toBeCloseTo(reference, 15);
		const [result] = applyRelation(vBand, [star]).stars;
		expect(result.errorBudget.coefficients).toBeCloseTo(Math.sqrt(reference), 14);
	});

	test('σ_μ0 combines photometric, reddening, σ_int, coefficient and metallicity terms in quadrature', () => {
		const [result] = applyRelation(vBand, [star]).stars;
		const b = result.errorBudget;
		expect(b.photometric).toBe(0.05);
		expect(b.reddening).toBeCloseTo(bandExtinctionPerEbv('ccm89', 'V', 3.1) * 0.02, 12);
		expect(b.intrinsic).toBe(0.21);
		expect(b.metallicity).toBeCloseTo(0.02, 14); // |γ|·σ_[Fe/H] = 0.2 × 0.1
		expect(result.mu0.error).toBeCloseTo(
			Math.hypot(b.photometric, b.reddening, b.intrinsic, b.coefficients, b.metallicity),
			14
		);
		// a longer period sits further from the pivot, so the slope uncertainty grows the coefficient term
		const [far] = applyRelation(vBand, [{ ...star, periodDays: 60 }]).stars;
		expect(far.errorBudget.coefficients).toBeGreaterThan(b.coefficients);
		expect(result.distancePc.error / result.distancePc.value).toBeCloseTo((Math.LN10 / 5) * result.mu0.error, 12);
	});

	test('a Wesenheit relation ignores reddening and warns when one is given (Madore 1982: reddening-free by construction)', () => {
		const { stars } = applyRelation(wesenheit, [star, { ...star, id: 'cand-2', ebv: null, feh: null }]);
		expect(stars[0].extinction).toEqual({ value: 0, error: 0 });
		expect(stars[0].warnings.map((w) => w.code)).toEqual(['reddening_ignored']);
		expect(stars[1].warnings).toEqual([]);
		expect(stars[0].mu0.value).toBeCloseTo(25.1 + 5.889 + 3.476 * (Math.log10(25) - 1), 12);
	});

	test('dereddening with another law than the relation’s warns extinction_law_mismatch and changes A', () => {
		const own = applyRelation(vBand, [star]);
		const other = applyRelation(vBand, [star], { extinctionLaw: 'fitzpatrick99' });
		expect(own.warnings).toEqual([]);
		expect(other.warnings.map((w) => w.code)).toEqual(['extinction_law_mismatch']);
		expect(other.stars[0].extinction.value).toBeCloseTo(bandExtinctionPerEbv('fitzpatrick99', 'V', 3.1) * 0.12, 12);
	});

	test('reddening a band the law cannot handle (IRAC [3.6], Gaia G) is refused with the typed error; without E(B−V) it warns', () => {
		// CCM89 covers 0.3 ≤ x ≤ 10 µm⁻¹ (CCM89, ApJ 345, 245); IRAC lies outside, Gaia G is too broad (PRODUCT.md).
		for (const bandId of ['IRAC36', 'G']) {
			expect(() => applyRelation({ ...vBand, bandId }, [star])).toThrow(ExtinctionNotApplicableError);
		}
		const [noEbv] = applyRelation({ ...vBand, bandId: 'IRAC36' }, [{ ...star, ebv: null }]).stars;
		expect(noEbv.warnings.map((w) => w.code)).toEqual(['reddening_missing']);
		expect(noEbv.extinction.value).toBe(0);
	});

	test('an injected extinction function is used (A linear in E(B−V))', () => {
		const [result] = applyRelation(vBand, [star], { extinction: (_law, _band, ebv, rV) => rV * ebv }).stars;
		expect(result.extinction.value).toBeCloseTo(3.1 * 0.12, 14);
		expect(result.errorBudget.reddening).toBeCloseTo(3.1 * 0.02, 14);
	});

	test('outside the validity range warns with the numbers; missing [Fe/H] uses the pivot and warns', () => {
		const { stars } = applyRelation(vBand, [
			{ ...star, id: 'short', periodDays: 1.5, feh: 0.9 },
			{ ...star, id: 'nofeh', feh: null }
		]);
		const range = stars[0].warnings.filter((w) => w.code === 'outside_validity_range');
		expect(range).toHaveLength(2);
		expect(range[0].details).toEqual({ log_period: Math.log10(1.5), log_period_min: 0.4, log_period_max: 1.8 });
		expect(range[1].details).toEqual({ feh: 0.9, feh_min: -0.6, feh_max: 0.4 });
		expect(stars[1].warnings.map((w) => w.code)).toEqual(['metallicity_missing']);
		expect(stars[1].absoluteMagnitude.value).toBeCloseTo(-3.944 - 2.67 * (Math.log10(25) - 1), 12);
	});

	test('invalid stars are refused with every star and field named', () => {
		try {
			applyRelation(vBand, [
				{ ...star, periodDays: -2 },
				{ ...star, id: 'b', magErr: Number.NaN, mag: Number.POSITIVE_INFINITY },
				{ ...star, id: '' }
			]);
			expect.unreachable();
		} catch (error) {
			expect(error).toBeInstanceOf(CalibrationInputError);
			const issues = (error as CalibrationInputError).issues.map((i) => `${i.star}:${i.field}`);
			expect(issues).toEqual(['cand-1:periodDays', 'b:mag', 'b:magErr', '#2:id']);
		}
	});

	test('the columnar path gives the same numbers as the per-star path (1e−12 mag)', () => {
		const n = 200;
		const stars: StarPhotometry[] = Array.from({ length: n }, (_, i) => ({
			id: `s${i}`,
			periodDays: 2 + i * 0.4,
			mag: 24 + (i % 7) * 0.1,
			magErr: 0.03 + (i % 3) * 0.01,
			ebv: i % 5 === 0 ? null : 0.05 + (i % 4) * 0.03,
			ebvErr: 0.01,
			feh: i % 6 === 0 ? null : -0.5 + (i % 9) * 0.1,
			fehErr: 0.05
		}));
		const objects = applyRelation(vBand, stars).stars;
		const columns = applyRelationColumnar(vBand, {
			periodDays: Float64Array.from(stars, (s) => s.periodDays),
			mag: Float64Array.from(stars, (s) => s.mag),
			magErr: Float64Array.from(stars, (s) => s.magErr),
			ebv: Float64Array.from(stars, (s) => s.ebv ?? Number.NaN),
			ebvErr: Float64Array.from(stars, (s) => s.ebvErr ?? Number.NaN),
			feh: Float64Array.from(stars, (s) => s.feh ?? Number.NaN),
			fehErr: Float64Array.from(stars, (s) => s.fehErr ?? Number.NaN)
		});
		let maxDiff = 0;
		let maxErrDiff = 0;
		objects.forEach((o, i) => {
			maxDiff = Math.max(maxDiff, Math.abs(o.mu0.value - columns.mu0[i]));
			maxErrDiff = Math.max(maxErrDiff, Math.abs(o.mu0.error - columns.mu0Err[i]));
			expect(columns.distancePc[i] / o.distancePc.value - 1).toBeCloseTo(0, 11);
		});
		expect(maxDiff).toBeLessThan(1e-12);
		expect(maxErrDiff).toBeLessThan(1e-12);
		const outside = objects.filter((o) => o.warnings.some((w) => w.code === 'outside_validity_range')).length;
		expect(columns.outsideValidityCount).toBe(outside);
		expect(outside).toBeGreaterThan(0);
	});
});

const galacticReason = hasReferenceData('galactic-calibrators')
	? ''
	: ` (skipped: ${missingReason('galactic-calibrators')})`;
describe.skipIf(!hasReferenceData('galactic-calibrators'))(`Galactic Cepheids${galacticReason}`, () => {
	test('Madore, Freedman & Moak 2017 (ApJ 842, 42) V relation applied to the 59 stars of 59_madore.csv reproduces their HST-column moduli: mean offset < 0.1 mag, rms < 0.3 mag', () => {
		const [header, ...lines] = readReferenceFile('galactic-calibrators', '59_madore.csv').trim().split('\n');
		const columns = header.split(',');
		const rows = lines.map((line) => Object.fromEntries(line.split(',').map((value, i) => [columns[i], value])));
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
		const { stars } = applyRelation(
			relation,
			rows.map((row) => ({
				id: row.name,
				periodDays: 10 ** Number(row.logP),
				mag: Number(row.V_mag),
				magErr: 0.01,
				ebv: Number(row.EBV),
				ebvErr: 0
			}))
		);
		const residuals = stars.map((s, i) => s.mu0.value - Number(rows[i].HST));
		const mean = residuals.reduce((a, b) => a + b, 0) / residuals.length;
		const rms = Math.sqrt(residuals.reduce((a, b) => a + (b - mean) ** 2, 0) / residuals.length);
		// Measured: mean ≈ +0.06, rms ≈ 0.24 (the V-band PL scatter; Madore et al. quote σ ≈ 0.2 mag).
		expect(stars).toHaveLength(59);
		expect(Math.abs(mean)).toBeLessThan(0.1);
		expect(rms).toBeLessThan(0.3);
	});
});
