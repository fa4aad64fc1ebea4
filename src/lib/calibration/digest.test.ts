import { createHash } from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import {
	canonicalJson,
	digestOf,
	relationVersionDigest,
	calibratorRevisionDigest,
	sealRelationVersion,
	sha256Hex,
	verifyDigest
} from './digest';
import { ENGINE_VERSION } from './engine-version';
import {
	inEngineOneShape,
	findUndefinedPaths,
	parseCalibratorRevisionContent,
	parseRelationVersionContent,
	relationFromContent,
	type CalibratorRevisionContent,
	type RelationVersionContent
} from './frozen-content';
import { systematicCovariance } from './systematics';
import { CalibrationInputError } from './types';

/** Invented relation version (demo numbers). */
function sampleVersion(): RelationVersionContent {
	return {
		ref: 'mw-wvi-parallax@3',
		version: 3,
		band: 'W_VI',
		population: 'classical_fundamental',
		magnitude_system: 'Vega',
		form: 'period_luminosity_metallicity',
		coefficients: { zero_point: -5.912, slope: -3.281, metallicity_term: -0.217 },
		pivot_log_period: 1,
		pivot_feh: 0,
		covariance: {
			axes: ['zero_point', 'slope', 'metallicity_term'],
			matrix: [
				[0.00031, 0.00002, 0.00011],
				[0.00002, 0.0019, -0.00004],
				[0.00011, -0.00004, 0.0041]
			]
		},
		intrinsic_scatter: 0.071,
		n_used: 41,
		rejected: [{ star: 'Cand-17', reason: 'sigma_clip', standardized_residual: 3.42 }],
		validity: { log_period_min: 0.42, log_period_max: 1.63, feh_min: -0.41, feh_max: 0.32 },
		fit: {
			method: 'ml_scatter',
			anchor: 'parallax',
			weighted_covariance: 'absolute',
			fixed_slope: null,
			fixed_zero_point: null,
			clipping: { sigma: 3, max_iterations: 10 },
			extinction_law: null,
			r_v: null,
			parallax_offset: { mode: 'fitted', value: -0.014, error: 0.006 },
			bootstrap: { resamples: 1000, generator: 'xoroshiro128plus', seed: 20260101, level: 0.68 },
			population: 'classical_fundamental',
			period_filter: { log_period_min: 0.4, log_period_max: null },
			fundamentalised: false,
			assumed_intrinsic_scatter: null,
			intrinsic_scatter_estimator: 'reml'
		},
		engine_version: ENGINE_VERSION,
		calibrator_set: { slug: 'mw-cepheids', revision: 2, digest: `sha256:${'ab'.repeat(32)}` },
		approved_by: [{ name: 'A. Reviewer', orcid: '0000-0002-1825-0097' }],
		approved_at: '2026-11-30T14:05:00Z',
		systematics: { terms: [] },
		fit_quality: {
			reduced_chi_square: 1.04,
			degrees_of_freedom: 37,
			covariance_scaled: false,
			errors_too_small: false
		},
		wesenheit_ratio: 1.55
	};
}

/** The same version as engine 1.0.0 froze it: without the keys engine 2 added. */
function engineOneVersion(): RelationVersionContent {
	return inEngineOneShape(sampleVersion());
}

function sampleRevision(): CalibratorRevisionContent {
	return {
		calibrator_set: 'mw-cepheids',
		revision: 2,
		source_file: { name: 'calibrators.csv', media_type: 'text/csv', digest: `sha256:${'cd'.repeat(32)}` },
		columns: [
			{ field: 'period_days', source_column: 'P', unit: 'd' },
			{ field: 'mag_v', source_column: 'Vmag', unit: 'mag' },
			{ field: 'reference', source_column: 'ref', unit: null }
		],
		rows: [
			{ star: 'Cand-1', values: { period_days: 5.366, mag_v: 3.95, reference: 'invented 2026' } },
			{ star: 'Cand-2', values: { period_days: 10.15, mag_v: null, reference: 'invented 2026' } }
		]
	};
}

/** Every leaf path of a JSON value. */
function leafPaths(value: unknown, path: (string | number)[] = []): (string | number)[][] {
	if (Array.isArray(value)) return value.flatMap((item, i) => leafPaths(item, [...path, i]));
	if (value !== null && typeof value === 'object') {
		return Object.entries(value).flatMap(([key, item]) => leafPaths(item, [...path, key]));
	}
	return [path];
}

/** Deep copy with every object's keys in the order given by `order` (a permutation source). */
function reorderKeys(value: unknown, order: (keys: string[]) => string[]): unknown {
	if (Array.isArray(value)) return value.map((item) => reorderKeys(item, order));
	if (value !== null && typeof value === 'object') {
		const entries = Object.entries(value);
		const byKey = new Map(entries);
		return Object.fromEntries(
			order(entries.map(([key]) => key)).map((key) => [key, reorderKeys(byKey.get(key), order)])
		);
	}
	return value;
}

describe('RFC 8785 canonical JSON', () => {
	test('§3.2.3 sorting example: keys ordered by UTF-16 code units (RFC 8785 text, from memory)', () => {
		const input = JSON.parse(String.raw`{
			"\u20ac": "Euro Sign", "\r": "Carriage Return", "\ufb33": "Hebrew Letter Dalet With Dagesh",
			"1": "One", "\ud83d\ude00": "Emoji: Grinning Face", "\u0080": "Control",
			"\u00f6": "Latin Small Letter O With Diaeresis"
		}`);
		// (JavaScript itself iterates the integer-like key "1" first; the canonical form must not.)
		expect(canonicalJson(input)).toBe(
			'{"\\r":"Carriage Return","1":"One","\u0080":"Control","\u00f6":"Latin Small Letter O With Diaeresis",' +
				'"\u20ac":"Euro Sign","\ud83d\ude00":"Emoji: Grinning Face","\ufb33":"Hebrew Letter Dalet With Dagesh"}'
		);
	});

	test('§3.2.2 example: whitespace removed, numbers and strings normalised (RFC 8785 text, from memory)', () => {
		const input = JSON.parse(String.raw`{
			"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001],
			"string": "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"\/",
			"literals": [null, true, false]
		}`);
		expect(canonicalJson(input)).toBe(
			String.raw`{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\u000f\nA'B\"\\\\\"/"}`
		);
	});

	test.each([
		// RFC 8785 Appendix B number samples: IEEE 754 bits → canonical text (from memory).
		['0000000000000000', '0'],
		['8000000000000000', '0'],
		['0000000000000001', '5e-324'],
		['8000000000000001', '-5e-324'],
		['7fefffffffffffff', '1.7976931348623157e+308'],
		['ffefffffffffffff', '-1.7976931348623157e+308'],
		['4340000000000000', '9007199254740992'],
		['c340000000000000', '-9007199254740992'],
		['4430000000000000', '295147905179352830000'],
		['44b52d02c7e14af5', '9.999999999999997e+22'],
		['44b52d02c7e14af6', '1e+23'],
		['44b52d02c7e14af7', '1.0000000000000001e+23'],
		['444b1ae4d6e2ef4e', '999999999999999700000'],
		['444b1ae4d6e2ef4f', '999999999999999900000'],
		['444b1ae4d6e2ef50', '1e+21'],
		['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'],
		['3eb0c6f7a0b5ed8d', '0.000001'],
		['41b3de4355555553', '333333333.3333332'],
		['41b3de4355555554', '333333333.33333325'],
		['41b3de4355555555', '333333333.3333333'],
		['41b3de4355555556', '333333333.3333334'],
		['41b3de4355555557', '333333333.33333343'],
		['becbf647612f3696', '-0.0000033333333333333333'],
		['43143ff3c1cb0959', '1424953923781206.2']
	])('number 0x%s serialises as %s', (bits, text) => {
		const view = new DataView(new ArrayBuffer(8));
		view.setBigUint64(0, BigInt(`0x${bits}`));
		expect(canonicalJson([view.getFloat64(0)])).toBe(`[${text}]`);
	});
});

describe('sha256 and digests', () => {
	test('sha256 of the empty string and "abc" (FIPS 180-2 examples, from memory) and agreement with node:crypto on random text', () => {
		expect(sha256Hex('')).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
		expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
		fc.assert(
			fc.property(fc.string({ unit: 'binary', maxLength: 300 }), (text) => {
				expect(sha256Hex(text)).toBe(createHash('sha256').update(text, 'utf8').digest('hex'));
			}),
			{ numRuns: 200 }
		);
	});

	test('a relation version digest is sha256 of its canonical JSON, prefixed, and verifyDigest accepts the sealed body', () => {
		const content = sampleVersion();
		const digest = relationVersionDigest(content);
		expect(digest).toMatch(/^sha256:[0-9a-f]{64}$/);
		expect(digest).toBe(`sha256:${createHash('sha256').update(canonicalJson(content), 'utf8').digest('hex')}`);
		const sealed = sealRelationVersion(content);
		expect(verifyDigest(sealed)).toEqual({ ok: true, stated: digest, computed: digest });
		expect(verifyDigest({ ...sealed, n_used: 42 }).ok).toBe(false);
		expect(verifyDigest(JSON.parse(JSON.stringify(sealed))).ok).toBe(true);
		// the digest field itself does not enter the digest
		expect(relationVersionDigest({ ...content, digest: 'sha256:whatever' } as RelationVersionContent)).toBe(digest);
	});

	test('property: the digest does not depend on key order at any depth (RFC 8785 §3.2.3)', () => {
		const content = sampleVersion();
		const digest = relationVersionDigest(content);
		fc.assert(
			fc.property(fc.integer(), (seed) => {
				let state = seed >>> 0;
				const shuffle = (keys: string[]) => {
					const out = [...keys];
					for (let i = out.length - 1; i > 0; i--) {
						state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
						const j = state % (i + 1);
						[out[i], out[j]] = [out[j], out[i]];
					}
					return out;
				};
				expect(relationVersionDigest(reorderKeys(content, shuffle) as RelationVersionContent)).toBe(digest);
			}),
			{ numRuns: 100 }
		);
	});

	test('property: changing any single frozen field changes the digest', () => {
		const content = sampleVersion();
		const digest = relationVersionDigest(content);
		const paths = leafPaths(content);
		expect(paths.length).toBeGreaterThan(40);
		fc.assert(
			fc.property(fc.constantFrom(...paths), fc.double({ noNaN: true, noDefaultInfinity: true }), (path, delta) => {
				const changed = structuredClone(content) as unknown as Record<string | number, unknown>;
				let node = changed as Record<string | number, unknown>;
				for (const key of path.slice(0, -1)) node = node[key] as Record<string | number, unknown>;
				const last = path[path.length - 1];
				const old = node[last];
				node[last] =
					typeof old === 'number'
						? old + delta !== old
							? old + delta
							: old + 1
						: typeof old === 'string'
							? `${old}x`
							: old === null
								? 0
								: !old;
				expect(digestOf(changed)).not.toBe(digest);
			}),
			{ numRuns: 300 }
		);
	});

	test('calibrator revision content has its own digest and refuses rows that omit a mapped column', () => {
		const revision = sampleRevision();
		expect(calibratorRevisionDigest(revision)).toMatch(/^sha256:[0-9a-f]{64}$/);
		const reordered = { ...revision, rows: revision.rows.map((row) => ({ values: row.values, star: row.star })) };
		expect(calibratorRevisionDigest(reordered)).toBe(calibratorRevisionDigest(revision));
		const missing = structuredClone(revision);
		delete (missing.rows[1].values as Record<string, unknown>).mag_v;
		expect(() => parseCalibratorRevisionContent(missing)).toThrow(/exactly one value per mapped column/);
	});
});

describe('frozen content validation', () => {
	test('the sample validates and maps to a Relation', () => {
		const relation = relationFromContent(parseRelationVersionContent(sampleVersion()));
		expect(relation.coefficients).toEqual({ zeroPoint: -5.912, slope: -3.281, metallicityTerm: -0.217 });
		expect(relation.validity.fehMax).toBe(0.32);
	});

	test('undefined values are refused (nulls must be written) with the field named', () => {
		const content = sampleVersion() as unknown as Record<string, Record<string, unknown>>;
		content.fit.fixed_slope = undefined;
		expect(findUndefinedPaths(content)).toEqual(['fit.fixed_slope']);
		try {
			parseRelationVersionContent(content);
			expect.unreachable();
		} catch (error) {
			expect(error).toBeInstanceOf(CalibrationInputError);
			const issue = (error as CalibrationInputError).issues[0];
			expect(issue).toEqual({
				star: 'mw-wvi-parallax@3',
				field: 'fit.fixed_slope',
				message: 'is undefined; write null for an absent value'
			});
		}
		const omitted = sampleVersion() as unknown as Record<string, unknown>;
		delete omitted.intrinsic_scatter;
		expect(() => parseRelationVersionContent(omitted)).toThrow(/intrinsic_scatter/);
	});

	test.each([
		['ref does not match version', (c: RelationVersionContent) => ({ ...c, ref: 'mw-wvi-parallax@4' }), 'ref'],
		[
			'asymmetric covariance',
			(c: RelationVersionContent) => ({
				...c,
				covariance: {
					...c.covariance,
					matrix: [
						[1, 2, 0],
						[0, 1, 0],
						[0, 0, 1]
					]
				}
			}),
			'covariance.matrix.0.1'
		],
		[
			'γ missing for a metallicity form',
			(c: RelationVersionContent) => ({ ...c, coefficients: { ...c.coefficients, metallicity_term: null } }),
			'coefficients.metallicity_term'
		],
		[
			'approved_at not UTC',
			(c: RelationVersionContent) => ({ ...c, approved_at: '2026-11-30T15:05:00+01:00' }),
			'approved_at'
		],
		['unknown extra key', (c: RelationVersionContent) => ({ ...c, note: 'x' }), '(root)'],
		[
			'bad calibrator digest',
			(c: RelationVersionContent) => ({ ...c, calibrator_set: { ...c.calibrator_set, digest: 'md5:1' } }),
			'calibrator_set.digest'
		]
	])('%s is refused naming %s', (_label, mutate, field) => {
		try {
			parseRelationVersionContent(mutate(sampleVersion()));
			expect.unreachable();
		} catch (error) {
			expect(error).toBeInstanceOf(CalibrationInputError);
			expect((error as CalibrationInputError).issues.map((i) => i.field)).toContain(field);
		}
	});
});

describe('systematics in frozen content (engine 2)', () => {
	test('engine 1.x content has no systematics keys and keeps validating; engine 2 needs all three', () => {
		const started = performance.now();
		expect(() => parseRelationVersionContent(engineOneVersion())).not.toThrow();
		expect(systematicCovariance(engineOneVersion())).toBeNull();
		const mixed = { ...engineOneVersion(), wesenheit_ratio: 1.55 };
		expect(() => parseRelationVersionContent(mixed)).toThrow(
			/wesenheit_ratio: is not part of versions frozen by engine 1\.0\.0/
		);
		const { fit_quality: _q, ...missing } = sampleVersion();
		expect(() => parseRelationVersionContent(missing)).toThrow(/fit_quality: is required from engine 2 on/);
		console.log(`engine shapes: ${(performance.now() - started).toFixed(1)} ms`);
	});

	test('systematicCovariance is Σ effect·effectᵀ over the terms, on a, b and γ', () => {
		// Outer-product sum of independent shifts (common practice: Cov = Σₖ eₖeₖᵀ for independent unit terms).
		const content = {
			...sampleVersion(),
			systematics: {
				terms: [
					{
						id: 'anchor_distance' as const,
						label: 'LMC distance modulus 18.477 ± 0.026 mag',
						value: 18.477,
						error: 0.026,
						effect: { zero_point: -0.026, slope: 0, metallicity_term: 0 }
					},
					{
						id: 'fixed_slope' as const,
						label: 'adopted slope −3.3 ± 0.05 mag/dex',
						value: -3.3,
						error: 0.05,
						effect: { zero_point: 0.01, slope: 0.05, metallicity_term: -0.002 }
					}
				]
			}
		};
		expect(() => parseRelationVersionContent(content)).not.toThrow();
		const covariance = systematicCovariance(content)!;
		expect(covariance.axes).toEqual(['zero_point', 'slope', 'metallicity_term']);
		expect(covariance.matrix[0][0]).toBeCloseTo(0.026 ** 2 + 0.01 ** 2, 15);
		expect(covariance.matrix[0][1]).toBeCloseTo(0.01 * 0.05, 15);
		expect(covariance.matrix[1][2]).toBeCloseTo(0.05 * -0.002, 15);
		expect(covariance.matrix[2][2]).toBeCloseTo(0.002 ** 2, 15);
		const wrong = structuredClone(content);
		wrong.systematics.terms[0].effect.metallicity_term = null as unknown as number;
		expect(() => parseRelationVersionContent(wrong)).toThrow(/metallicity_term: must be a number/);
	});
});
