import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { calibratorRevisionDigest } from '../../src/lib/calibration/digest';
import {
	findForbiddenCharacter,
	findForbiddenInJson,
	stripForbiddenCharacters
} from '../../src/lib/calibration/forbidden-characters';
import { parseCalibratorRevisionContent } from '../../src/lib/calibration/frozen-content';
import { parseCalibratorTable } from '../../src/lib/calibration/calibrator-table/index';
import { parseLightCurveUpload } from '../../src/lib/calibration/light-curves/upload-table';
import { atomFeed } from '../../src/lib/publishing/atom';
import { parseJsonBytes } from '../../src/lib/server/api/request-body';
import { calibratorRevisionToVoTable } from '../../src/lib/publishing/votable';

/**
 * Characters XML 1.0 (W3C Recommendation, 5th ed., §2.2 "Char") excludes and PostgreSQL's text/jsonb
 * cannot store (U+0000, unpaired surrogates): refused at upload by cell or JSON path, dropped by the
 * XML writers. xmllint (Debian libxml2-utils) and the VOTable 1.4 schema that Debian's python3-astropy
 * ships are the outside judges of the XML.
 */
const ASTROPY_DATA = '/usr/lib/python3/dist-packages/astropy/io/votable/data';
const work = mkdtempSync(join(tmpdir(), 'candlebook-hostile-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));
const started = performance.now();
afterAll(() => console.log(`hostile characters: ${(performance.now() - started).toFixed(0)} ms`));

/** One of each kind XML 1.0 forbids, and the allowed neighbours that must survive. */
const HOSTILE = [
	['NUL', '\u0000'],
	['U+0008', '\u0008'],
	['U+000B', '\u000B'],
	['U+001F', '\u001F'],
	['lone low surrogate', '\uDC00'],
	['lone high surrogate', '\uD800'],
	['U+FFFE', '\uFFFE'],
	['U+FFFF', '\uFFFF']
] as const;

describe('the forbidden-character rule (XML 1.0 §2.2 Char)', () => {
	test.each(HOSTILE)('finds %s', (_name, char) => {
		expect(findForbiddenCharacter(`Invented ${char}Cep`)).toEqual({ index: 9, codeUnit: char.charCodeAt(0) });
	});

	test('keeps what XML allows: tab, line feed, carriage return, a paired surrogate (astral plane), U+FFFD', () => {
		const allowed = 'tab\there\nline\r😀 \uFFFD é';
		expect(findForbiddenCharacter(allowed)).toBeNull();
		expect(stripForbiddenCharacters(`a\u0000b\uD800c\uFFFEd${allowed}`)).toBe(`abcd${allowed}`);
	});

	test('names the JSON path of the first string holding one, member names included', () => {
		expect(findForbiddenInJson({ stars: [{ name: 'ok' }, { name: 'bad\u0000' }] })?.path).toBe('stars/1/name');
		expect(findForbiddenInJson({ text: 'lone \uDFFF' })).toMatchObject({ path: 'text', reason: /U\+DFFF/ });
		expect(findForbiddenInJson({ ['k\uFFFF']: 1 })?.path).toBe('k⟨U+FFFF⟩');
		expect(findForbiddenInJson('\u0001')?.path).toBe('(body)');
		expect(findForbiddenInJson({ fine: ['😀', 1, null, true] })).toBeNull();
	});
});

describe('JSON bodies', () => {
	const refusal = (json: string) => {
		try {
			parseJsonBytes(new TextEncoder().encode(json));
		} catch (caught) {
			return caught as { status: number; body: { errors?: { path: string }[] } };
		}
		return null;
	};

	test.each([
		['an escaped NUL', '{"stars":[{"id":"a"},{"id":"b\\u0000"}]}', 'stars/1/id'],
		['an escaped lone surrogate', '{"rationale":"x\\udc00"}', 'rationale'],
		['a raw U+FFFE', '{"title":"x\uFFFE"}', 'title'],
		['an escaped U+FFFF in a member name', '{"k\\uffff":1}', 'k⟨U+FFFF⟩']
	])('refuses %s with 422 naming its path', (_name, json, path) => {
		expect(refusal(json)).toMatchObject({ status: 422, body: { errors: [{ path }] } });
	});

	test('passes escaped text that is allowed (a surrogate pair, a tab) and answers 400 to what is not JSON', () => {
		expect(parseJsonBytes(new TextEncoder().encode('{"a":"\\ud83d\\ude00\\t"}'))).toEqual({ a: '😀\t' });
		expect(refusal('{"a":')).toMatchObject({ status: 400 });
	});
});

const CSV_HEADER = 'star,population,period_days,mag_W_VI,parallax_mas,parallax_err_mas';

describe('calibrator table upload', () => {
	test.each(HOSTILE)('refuses %s by line and column', (_name, char) => {
		const text = [
			CSV_HEADER,
			'Invented A,classical_fundamental,5.1,2.0,1.1,0.1',
			`Invented ${char}B,classical_fundamental,6.2,1.9,1.0,0.1`
		].join('\n');
		const table = parseCalibratorTable(text);
		expect(table.rows).toEqual([]);
		expect(table.issues).toEqual([
			expect.objectContaining({ line: 3, column: 'star', reason: expect.stringContaining('does not store') })
		]);
		expect(table.issues[0].value).toContain(`⟨U+${char.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}⟩`);
	});

	test('names a header cell by its position when the name itself is hostile', () => {
		const table = parseCalibratorTable(`${CSV_HEADER},no\u0000te\nInvented A,classical_fundamental,5.1,2.0,1.1,0.1,x`);
		expect(table.issues).toEqual([expect.objectContaining({ line: 1, column: 'no⟨U+0000⟩te' })]);
	});
});

describe('light-curve upload', () => {
	const options = { mediaType: 'text/csv' as const, timeReference: 'HJD', timeOffsetDays: 0, star: 'Invented Cep' };
	const lines = (cell: string) => [
		'time,magnitude,error,band',
		...Array.from(
			{ length: 12 },
			(_, i) => `${2460000 + i * 0.37},${i === 4 ? cell : (12 + Math.sin(i)).toFixed(3)},0.01,V`
		)
	];
	// A file is bytes: UTF-8 cannot carry a lone surrogate, so only the other kinds arrive as characters.
	test.each(HOSTILE.filter(([name]) => !name.includes('surrogate')))('refuses %s by line and column', (_name, char) => {
		const parsed = parseLightCurveUpload(new TextEncoder().encode(lines(`12.5${char}`).join('\n')), options);
		expect(parsed.series).toEqual([]);
		expect(parsed.issues).toEqual([
			expect.objectContaining({ line: 6, column: 'magnitude', reason: expect.stringContaining('does not store') })
		]);
	});

	test('refuses a surrogate written as bytes (CESU-8 ED A0 80) as text that is not UTF-8, by line', () => {
		const [before, after] = lines('12.5@').join('\n').split('@');
		const bytes = new Uint8Array([
			...new TextEncoder().encode(before),
			0xed,
			0xa0,
			0x80,
			...new TextEncoder().encode(after)
		]);
		const parsed = parseLightCurveUpload(bytes, options);
		expect(parsed.issues).toEqual([expect.objectContaining({ line: 6, reason: expect.stringContaining('not UTF-8') })]);
	});
});

function xmllint(path: string, ...args: string[]) {
	return spawnSync('xmllint', ['--noout', ...args, path], { encoding: 'utf8' });
}

/** Every hostile character in one string, as text stored before the rule might hold. */
const ALL_HOSTILE = HOSTILE.map(([, char]) => char).join('');

describe('XML writers never emit a character XML 1.0 forbids', () => {
	test('a VOTable of rows, title, licence and citations holding every one parses and validates (VOTable 1.4 XSD)', () => {
		const content = parseCalibratorRevisionContent({
			calibrator_set: 'invented-set',
			revision: 1,
			source_file: { name: `invented${ALL_HOSTILE}.csv`, media_type: 'text/csv', digest: `sha256:${'3'.repeat(64)}` },
			columns: [
				{ field: 'star', source_column: 'star', unit: null },
				{ field: 'reference', source_column: 'reference', unit: null },
				{ field: 'period_days', source_column: 'period_days', unit: 'd' }
			],
			rows: [
				{
					star: `Invented ${ALL_HOSTILE}Cep`,
					values: { star: `Invented ${ALL_HOSTILE}Cep`, reference: `Ref${ALL_HOSTILE}`, period_days: 5.4 }
				}
			]
		});
		const xml = calibratorRevisionToVoTable(content, {
			digest: calibratorRevisionDigest(content),
			licence: `CC-BY-4.0${ALL_HOSTILE}`,
			requiredCitations: [`Invented Team${ALL_HOSTILE} 2026`],
			title: `Invented${ALL_HOSTILE} calibrators (demo)`
		});
		expect(xml.isWellFormed()).toBe(true);
		expect(findForbiddenCharacter(xml)).toBeNull();
		expect(xml).toContain('<TD>Invented Cep</TD>');
		const path = join(work, 'hostile.vot');
		writeFileSync(path, xml);
		const result = xmllint(path, '--schema', join(ASTROPY_DATA, 'VOTable.v1.4.xsd'));
		expect(result.stderr).toContain('validates');
		expect(result.status).toBe(0);
	});

	test('an Atom feed whose titles and summaries hold every one parses with xmllint', () => {
		const xml = atomFeed({
			id: 'urn:uuid:5d7c7f59-0000-4000-8000-000000000001',
			title: `Invented relation${ALL_HOSTILE}`,
			selfLink: 'http://127.0.0.1/relations/invented/feed.atom',
			alternateLink: 'http://127.0.0.1/relations/invented',
			fallbackUpdated: '2026-12-01T00:00:00Z',
			entries: [
				{
					id: 'urn:uuid:5d7c7f59-0000-4000-8000-000000000002',
					title: `Version 2${ALL_HOSTILE}`,
					updated: '2026-12-02T00:00:00Z',
					link: 'http://127.0.0.1/relations/invented/versions/2',
					summary: `Rationale ${ALL_HOSTILE}with tab\tand newline\n`
				}
			]
		});
		expect(xml.isWellFormed()).toBe(true);
		const path = join(work, 'hostile.atom');
		writeFileSync(path, xml);
		const result = xmllint(path);
		expect(result.stderr).toBe('');
		expect(result.status).toBe(0);
		expect(xml).toContain('Rationale with tab\tand newline');
	});
});
