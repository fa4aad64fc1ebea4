import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { calibratorRevisionDigest } from '../../src/lib/calibration/digest';
import { parseCalibratorRevisionContent } from '../../src/lib/calibration/frozen-content';
import { parseCalibratorTable } from '../../src/lib/calibration/calibrator-table/index';
import { contentDigest, parseContentDigest } from '../../src/lib/publishing/content-digest';
import { calibratorRevisionToVoTable, fieldMeta } from '../../src/lib/publishing/votable';
import { PYTHON, runPython } from '../support/astropy';

/** Debian's python3-astropy ships the IVOA schema and the UCD1+ word list (astropy/io/votable/data/). */
const ASTROPY_DATA = '/usr/lib/python3/dist-packages/astropy/io/votable/data';
const work = mkdtempSync(join(tmpdir(), 'candlebook-votable-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

const CSV = [
	'star,cross_id,population,period_days,mag_V,mag_err_V,mag_W_VI,parallax_mas,parallax_err_mas,ebv,feh,reference',
	'Invented <Alpha> & Co,4001,classical_fundamental,5.366,3.95,0.01,2.05,3.27,0.05,0.12,0.05,"Invented, 2026"',
	'Invented Beta,4002,classical_first_overtone,3.1,5.2,0.02,3.6,-0.1,0.2,,,Invented 2026'
].join('\n');

function revision() {
	const table = parseCalibratorTable(CSV, {}, undefined, { keepNonPositiveParallax: true });
	expect(table.issues).toEqual([]);
	return parseCalibratorRevisionContent({
		calibrator_set: 'invented-set',
		revision: 3,
		source_file: { name: 'invented.csv', media_type: 'text/csv', digest: `sha256:${'2'.repeat(64)}` },
		columns: table.columns,
		rows: table.rows
	});
}

describe('VOTable 1.4 export of a calibrator revision', () => {
	const content = revision();
	const xml = calibratorRevisionToVoTable(content, {
		digest: calibratorRevisionDigest(content),
		licence: 'CC-BY-4.0',
		requiredCitations: ['Invented Survey Team 2026, invented journal 1, 1'],
		title: 'Invented calibrators (demo)'
	});
	const path = join(work, 'revision.vot');
	writeFileSync(path, xml);

	test('validates with xmllint against the IVOA VOTable 1.4 schema shipped in python3-astropy', () => {
		const result = spawnSync('xmllint', ['--noout', '--schema', join(ASTROPY_DATA, 'VOTable.v1.4.xsd'), path], {
			encoding: 'utf8'
		});
		expect(result.stderr).toContain('validates');
		expect(result.status).toBe(0);
	});

	test('every UCD word is in the UCD1+ list that astropy ships (ucd1p-words.txt)', () => {
		const words = new Set(
			readFileSync(join(ASTROPY_DATA, 'ucd1p-words.txt'), 'utf8')
				.split('\n')
				.filter((line) => /^[A-Z]\|/.test(line))
				.map((line) => line.split('|')[1].trim())
		);
		const used = content.columns.flatMap((column) => fieldMeta(column.field).ucd.split(';'));
		expect(used.filter((word) => !words.has(word))).toEqual([]);
	});

	test('astropy reads the same numbers, units, nulls and provenance back', () => {
		// astropy.io.votable.parse (astropy 5.2.1, Debian), a VO client outside the project.
		const read = runPython<{
			names: string[];
			units: (string | null)[];
			rows: unknown[][];
			infos: Record<string, string>;
		}>(
			[
				'from astropy.io.votable import parse',
				'import math',
				'vot = parse(data["path"], verify="exception")',
				'table = vot.get_first_table()',
				'infos = {info.name: info.value for info in vot.resources[0].infos}',
				'def plain(v):',
				'    if hasattr(v, "mask") and v.mask: return None',
				'    v = v.item() if hasattr(v, "item") else v',
				'    return None if isinstance(v, float) and math.isnan(v) else v',
				'rows = [[plain(table.array[name][i]) for name in table.array.dtype.names] for i in range(len(table.array))]',
				'print(json.dumps({"names": list(table.array.dtype.names), "units": [str(f.unit) if f.unit else None for f in table.fields], "rows": rows, "infos": infos}))'
			].join('\n'),
			{ path }
		);
		expect(read.names).toEqual(content.columns.map((column) => column.field));
		expect(read.infos.digest).toBe(calibratorRevisionDigest(content));
		expect(read.infos.licence).toBe('CC-BY-4.0');
		const fields = content.columns.map((column) => column.field);
		content.rows.forEach((row, i) => {
			fields.forEach((field, j) => expect(read.rows[i][j], `${row.star}.${field}`).toEqual(row.values[field] ?? null));
		});
		expect(read.units[fields.indexOf('parallax_mas')]).toBe('mas');
		expect(read.units[fields.indexOf('period_days')]).toBe('d');
	});
});

describe('RFC 9530 Content-Digest', () => {
	test('matches SHA-256 computed by Python’s hashlib, base64-encoded as a structured byte sequence', () => {
		const body = new TextEncoder().encode('{"ref":"invented@1","zero_point":-5.9}');
		const header = contentDigest(body);
		const python = spawnSync(
			PYTHON,
			[
				'-c',
				'import sys, hashlib, base64; print(base64.b64encode(hashlib.sha256(sys.stdin.buffer.read()).digest()).decode())'
			],
			{
				input: body
			}
		);
		expect(header).toBe(`sha-256=:${python.stdout.toString().trim()}:`);
		expect(parseContentDigest(`sha-512=:AAAA:, ${header}`)).toEqual(parseContentDigest(header));
	});

	test('RFC 9530 Appendix B.1 example: {"hello": "world"} has sha-256=:X48E9qOokqqrvdts8nOJRJN3OWDUoyWxBf7kbu9DBPE=:', () => {
		// The example value from RFC 9530 §B.1 (from memory), checked above against hashlib as well.
		expect(contentDigest(new TextEncoder().encode('{"hello": "world"}'))).toBe(
			'sha-256=:X48E9qOokqqrvdts8nOJRJN3OWDUoyWxBf7kbu9DBPE=:'
		);
	});

	test('malformed headers are refused', () => {
		expect(parseContentDigest('sha-256=abc')).toBeNull();
		expect(parseContentDigest('sha-256=:AAAA:')).toBeNull();
		expect(parseContentDigest('md5=:AAAA:')).toBeNull();
	});
});
