import { describe, expect, test } from 'vitest';
import { hasReferenceData, missingReason, readReferenceFile } from '../../../../tests/support/reference-data';
import { fitQualityOf, fitQualityWarning } from './fit-quality';
import { fitLinearRelation } from './linear-fit';
import type { CalibratorPoint } from './types';

const GALACTIC = 'galactic-calibrators';
const OGLE = 'ogle-magellanic-cepheids';

/** Suite title, carrying the one-line reason when its reference folder is missing and it is skipped. */
const titled = (folder: string, title: string) =>
	hasReferenceData(folder) ? title : `${title} — skipped: ${missingReason(folder)}`;

/** Rows of the published table (Band & $slope$ & $σ$ & $zero$ & $σ$), read from the .tex itself. */
function parsePublishedRelations(tex: string) {
	const cell = '\\$\\s*([-−]?\\d+\\.\\d+)\\s*\\$';
	const row = new RegExp(`^\\s*([A-Z]|W\\([A-Z]+\\))\\s*&\\s*${cell}\\s*&\\s*${cell}\\s*&\\s*${cell}\\s*&\\s*${cell}`);
	return tex
		.split(/\r?\n/)
		.map((line) => line.match(row))
		.filter((match): match is RegExpMatchArray => match !== null)
		.map((match) => {
			const [slope, slopeError, zeroPoint, zeroPointError] = match
				.slice(2, 6)
				.map((value) => Number(value.replace('−', '-')));
			return { band: match[1], slope, slopeError, zeroPoint, zeroPointError };
		});
}

const TABLE7_COLUMN: Record<string, string> = {
	B: 'BMAG',
	V: 'VMAG',
	R: 'RcMAG',
	I: 'IcMAG',
	J: 'JMAG',
	H: 'HMAG',
	K: 'KsMAG',
	'W(VI)': 'Wvi',
	'W(BI)': 'Wbi'
};

// Madore, Freedman & Moak 2017, ApJ 842, 42, table of Galactic BVRIJHK and Wesenheit Leavitt laws
// (galactic-calibrators/3_madorePLW.tex), fitted to Fouqué et al. 2007 Table 7 (galactic-calibrators/table7.csv).
describe.skipIf(!hasReferenceData(GALACTIC))(
	titled(GALACTIC, 'Galactic calibrators: refit of the published PL relations'),
	() => {
		const published = hasReferenceData(GALACTIC)
			? parsePublishedRelations(readReferenceFile(GALACTIC, '3_madorePLW.tex'))
			: [];
		const lines = hasReferenceData(GALACTIC) ? readReferenceFile(GALACTIC, 'table7.csv').trim().split(/\r?\n/) : [''];
		const header = lines[0].split(',');
		const rows = lines.slice(1).map((line) => line.split(','));

		test('the table lists nine bands and the calibrator file 59 stars', () => {
			expect(published.map((relation) => relation.band)).toEqual(Object.keys(TABLE7_COLUMN));
			expect(rows).toHaveLength(59);
		});

		const pointsIn = (band: string, absMagErr: number): CalibratorPoint[] => {
			const column = header.indexOf(TABLE7_COLUMN[band]);
			return rows
				.filter((row) => row[column] !== '' && row[column] !== undefined)
				.map((row) => ({ star: row[0], logPeriod: Number(row[1]), absMag: Number(row[column]), absMagErr }));
		};

		test.each(published.map((relation) => [relation.band, relation] as const))(
			'%s: unweighted fit at pivot log P = 1 matches the published slope and zero point to 0.01 mag',
			(band, relation) => {
				const started = performance.now();
				const fit = fitLinearRelation(pointsIn(band, 0), { method: 'ols', pivotLogPeriod: 1 });
				expect(Math.abs(fit.coefficients.slope - relation.slope)).toBeLessThanOrEqual(0.01);
				expect(Math.abs(fit.coefficients.zeroPoint - relation.zeroPoint)).toBeLessThanOrEqual(0.01);
				// The published σ are not asserted: the table does not say how they were computed, and their ratio
				// to the refit's OLS standard errors is not one factor across bands (about 1.2 in B down to about
				// 0.45 in the Wesenheit bands), so they come from another error model, not from this OLS on these stars.
				const ratio = (published: number, refit: number | null) => (published / (refit as number)).toFixed(2);
				console.log(
					`${band}: σ ratio published/refit — slope ${ratio(relation.slopeError, fit.errors.slope)}, ` +
						`zero point ${ratio(relation.zeroPointError, fit.errors.zeroPoint)} ` +
						`(${(performance.now() - started).toFixed(1)} ms)`
				);
			}
		);

		test('V with σ = 0.05 mag per star: the χ²/dof-scaled WLS zero-point error equals the OLS one, 0.0244', () => {
			// Fouqué et al. 2007 Table 7 (galactic-calibrators/table7.csv). With equal weights the WLS covariance
			// scaled by χ²/dof is the OLS covariance s²(XᵀX)⁻¹ (common practice); χ²/dof ≈ 13.9 here.
			const started = performance.now();
			const ols = fitLinearRelation(pointsIn('V', 0.05), { method: 'ols', pivotLogPeriod: 1 });
			const wls = fitLinearRelation(pointsIn('V', 0.05), { method: 'wls', pivotLogPeriod: 1 });
			const absolute = fitLinearRelation(pointsIn('V', 0.05), {
				method: 'wls',
				pivotLogPeriod: 1,
				weightedCovariance: 'absolute'
			});
			expect(Math.abs((ols.errors.zeroPoint as number) - 0.0244)).toBeLessThan(1e-4);
			expect(Math.abs((wls.errors.zeroPoint as number) - (ols.errors.zeroPoint as number))).toBeLessThan(1e-4);
			expect(Math.abs((wls.reducedChiSquare as number) - 13.9)).toBeLessThan(0.05);
			expect(wls.covarianceScaled).toBe(true);
			const quality = fitQualityOf(wls.reducedChiSquare, wls.degreesOfFreedom, wls.covarianceScaled);
			expect(quality.errorsTooSmall).toBe(true);
			expect(fitQualityWarning(quality)?.details).toMatchObject({ degreesOfFreedom: 57 });
			// Unscaled, the error is √13.9 ≈ 3.7 times too small: 0.05/√59 ≈ 0.0066.
			expect(absolute.errors.zeroPoint as number).toBeLessThan(0.007);
			console.log(
				`table7 V: σ_a OLS ${(ols.errors.zeroPoint as number).toFixed(5)}, scaled WLS ` +
					`${(wls.errors.zeroPoint as number).toFixed(5)}, absolute WLS ${(absolute.errors.zeroPoint as number).toFixed(5)}, ` +
					`χ²/dof ${(wls.reducedChiSquare as number).toFixed(2)} (${(performance.now() - started).toFixed(1)} ms)`
			);
		});
	}
);

interface OgleStar {
	id: string;
	i: number;
	v: number;
	logPeriod: number;
}

function readOgleFundamentalMode(): OgleStar[] {
	return readReferenceFile(OGLE, 'lmccephdata.csv')
		.trim()
		.split(/\r?\n/)
		.map((line) => line.split(','))
		.filter((cells) => cells[1] === 'F')
		.map((cells) => ({
			id: cells[0],
			i: Number(cells[4]),
			v: Number(cells[5]),
			logPeriod: Math.log10(Number(cells[7]))
		}))
		.filter((star) => star.i > -99 && star.v > -99);
}

function fitApparent(stars: OgleStar[], magnitude: (star: OgleStar) => number) {
	return fitLinearRelation(
		stars.map((star) => ({ star: star.id, logPeriod: star.logPeriod, absMag: magnitude(star), absMagErr: 0 })),
		{ method: 'ols', pivotLogPeriod: 0, clipping: { sigma: 3, maxIterations: 20 } }
	);
}

// OGLE-IV LMC classical Cepheids (Soszyński et al. 2015, AcA 65, 297; Udalski et al. 2015, AcA 65, 1),
// apparent mean magnitudes, so the zero point contains the LMC distance modulus.
describe.skipIf(!hasReferenceData(OGLE))(titled(OGLE, 'OGLE-IV LMC fundamental-mode Cepheids'), () => {
	const stars = hasReferenceData(OGLE) ? readOgleFundamentalMode() : [];
	const wesenheit = (star: OgleStar) => star.i - 1.55 * (star.v - star.i);
	const fitW = hasReferenceData(OGLE) ? fitApparent(stars, wesenheit) : null;

	test('W_I = I − 1.55(V − I), 3σ-clipped OLS, matches OGLE-III W_I = −3.314 log P + 15.892 within 0.005 mag', () => {
		// Soszyński et al. 2008, AcA 58, 163 (from memory). Measured: slope −3.3147, zero point 15.8887.
		const fit = fitW as NonNullable<typeof fitW>;
		expect(Math.abs(fit.coefficients.slope - -3.314)).toBeLessThan(0.005);
		expect(Math.abs(fit.coefficients.zeroPoint - 15.892)).toBeLessThan(0.005);
		// The difference is also within the fit's own 1σ statistical error (σ_b ≈ 0.008, σ_a ≈ 0.005).
		expect(Math.abs(fit.coefficients.zeroPoint - 15.892)).toBeLessThan(fit.errors.zeroPoint as number);
	});

	test('clipping converges, keeps > 90% of the stars and records each rejection with its round', () => {
		const fit = fitW as NonNullable<typeof fitW>;
		expect(fit.clippingRounds).toBeLessThan(20);
		expect(fit.starsUsed / fit.starsTotal).toBeGreaterThan(0.9);
		expect(fit.rejected.length).toBe(fit.starsTotal - fit.starsUsed);
		for (const rejection of fit.rejected) {
			expect(Math.abs(rejection.standardizedResidual)).toBeGreaterThan(3);
			expect(rejection.reason).toMatch(/^\|r\|\/σ = \d+\.\d\d > 3\.0 in round \d+$/);
		}
		expect(
			fit.residuals
				.filter((residual) => !residual.used)
				.map((residual) => residual.star)
				.sort()
		).toEqual(fit.rejected.map((rejection) => rejection.star).sort());
	});

	test('V and I alone differ from the extinction-corrected OGLE-II relations by the LMC extinction, loosely', () => {
		// Udalski et al. 1999, AcA 49, 201 (from memory): V = −2.760 log P + 17.042, I = −2.962 log P + 16.558,
		// dereddened, from a different catalogue. Raw apparent fits are fainter by ≈ A_V and A_I
		// (measured at log P = 1: +0.48 in V, +0.32 in I) and their slopes differ by 0.05–0.1.
		const fitV = fitApparent(stars, (star) => star.v);
		const fitI = fitApparent(stars, (star) => star.i);
		const offsetAtTenDays = (fit: typeof fitV, slope: number, zeroPoint: number) =>
			fit.coefficients.zeroPoint + fit.coefficients.slope - (zeroPoint + slope);
		const offsetV = offsetAtTenDays(fitV, -2.76, 17.042);
		const offsetI = offsetAtTenDays(fitI, -2.962, 16.558);
		expect(Math.abs(fitV.coefficients.slope - -2.76)).toBeLessThan(0.15);
		expect(Math.abs(fitI.coefficients.slope - -2.962)).toBeLessThan(0.15);
		// Extinction makes the apparent relation fainter, more so in V than in I.
		expect(offsetV).toBeGreaterThan(offsetI);
		expect(offsetI).toBeGreaterThan(0.1);
		expect(offsetV).toBeLessThan(0.8);
	});
});
