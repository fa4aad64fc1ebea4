/**
 * IVOA VOTable 1.4 (https://www.ivoa.net/documents/VOTable/) for a calibrator revision: one TABLE whose
 * FIELDs carry VOUnit units and UCD1+ words, with the revision's digest, licence and required
 * citations as INFO elements, so a VO client (astropy, TOPCAT…) reads the numbers with their meaning.
 * A revision that took values from light-curve analyses has a second TABLE naming the analysis of each.
 */
import { stripForbiddenCharacters } from '../calibration/forbidden-characters';
import type { CalibratorRevisionContent } from '../calibration/frozen-content';

export interface VoTableProvenance {
	digest: string;
	licence: string;
	requiredCitations: readonly string[];
	title: string;
}

interface FieldMeta {
	datatype: 'double' | 'char';
	unit: string | null;
	ucd: string;
	description: string;
}

const STATIC_META: Record<string, FieldMeta> = {
	star: { datatype: 'char', unit: null, ucd: 'meta.id;meta.main', description: 'Star name' },
	cross_id: {
		datatype: 'char',
		unit: null,
		ucd: 'meta.id.cross',
		description: 'Cross identification (e.g. Gaia DR3 source_id)'
	},
	population: { datatype: 'char', unit: null, ucd: 'meta.code', description: 'Candlebook population id' },
	period_days: { datatype: 'double', unit: 'd', ucd: 'time.period', description: 'Pulsation period' },
	period_err_days: { datatype: 'double', unit: 'd', ucd: 'stat.error;time.period', description: 'Error of the period' },
	parallax_mas: {
		datatype: 'double',
		unit: 'mas',
		ucd: 'pos.parallax.trig',
		description: 'Parallax as catalogued (zero point not removed)'
	},
	parallax_err_mas: {
		datatype: 'double',
		unit: 'mas',
		ucd: 'stat.error;pos.parallax.trig',
		description: 'Error of the parallax'
	},
	mu_host: { datatype: 'double', unit: 'mag', ucd: 'phot.mag.distMod', description: 'Distance modulus of the host' },
	mu_host_err: {
		datatype: 'double',
		unit: 'mag',
		ucd: 'stat.error;phot.mag.distMod',
		description: 'Error of the host distance modulus'
	},
	host: { datatype: 'char', unit: null, ucd: 'meta.id', description: 'Host galaxy or cluster' },
	ebv: { datatype: 'double', unit: 'mag', ucd: 'phot.color.excess', description: 'E(B-V) colour excess' },
	ebv_err: { datatype: 'double', unit: 'mag', ucd: 'stat.error;phot.color.excess', description: 'Error of E(B-V)' },
	feh: { datatype: 'double', unit: null, ucd: 'phys.abund.Fe', description: '[Fe/H] (dex)' },
	feh_err: { datatype: 'double', unit: null, ucd: 'stat.error;phys.abund.Fe', description: 'Error of [Fe/H] (dex)' },
	reference: { datatype: 'char', unit: null, ucd: 'meta.bib', description: 'Literature reference for the row' }
};

export function fieldMeta(field: string): FieldMeta {
	const known = STATIC_META[field];
	if (known) return known;
	const error = /^mag_err_(.+)$/.exec(field);
	if (error)
		return {
			datatype: 'double',
			unit: 'mag',
			ucd: 'stat.error;phot.mag',
			description: `Error of the mean magnitude in ${error[1]}`
		};
	const band = /^mag_(.+)$/.exec(field);
	if (band) return { datatype: 'double', unit: 'mag', ucd: 'phot.mag', description: `Mean magnitude in ${band[1]}` };
	return { datatype: 'char', unit: null, ucd: 'meta.note', description: field };
}

/**
 * Text as XML 1.0 character data or an attribute value. Characters XML 1.0 forbids even as references
 * (C0 controls but tab, LF and CR; unpaired surrogates; U+FFFE, U+FFFF) are dropped: uploads refuse
 * them, so only text stored before that rule can still hold one, and a document must parse regardless.
 */
export function escapeXml(text: string): string {
	return stripForbiddenCharacters(text)
		.replaceAll('&', '&amp;')
		.replaceAll('<', '&lt;')
		.replaceAll('>', '&gt;')
		.replaceAll('"', '&quot;')
		.replaceAll("'", '&apos;');
}

const attribute = (name: string, value: string | null) => (value === null ? '' : ` ${name}="${escapeXml(value)}"`);

function cell(value: unknown, meta: FieldMeta): string {
	if (value === null || value === undefined) return '<TD/>';
	if (meta.datatype === 'double') return `<TD>${typeof value === 'number' ? String(value) : ''}</TD>`;
	return `<TD>${escapeXml(String(value))}</TD>`;
}

/** The revision as a VOTable 1.4 document (TABLEDATA serialisation). Empty cells are nulls. */
export function calibratorRevisionToVoTable(content: CalibratorRevisionContent, provenance: VoTableProvenance): string {
	const fields = content.columns.map((column) => column.field);
	const metas = fields.map(fieldMeta);
	const lines = [
		'<?xml version="1.0" encoding="UTF-8"?>',
		'<VOTABLE version="1.4" xmlns="http://www.ivoa.net/xml/VOTable/v1.3">',
		`<RESOURCE name="${escapeXml(`${content.calibrator_set}@${content.revision}`)}" type="results">`,
		`<DESCRIPTION>${escapeXml(provenance.title)}</DESCRIPTION>`,
		`<INFO name="calibrator_set" value="${escapeXml(content.calibrator_set)}"/>`,
		`<INFO name="revision" value="${content.revision}"/>`,
		`<INFO name="digest" value="${escapeXml(provenance.digest)}"/>`,
		`<INFO name="source_file_digest" value="${escapeXml(content.source_file.digest)}"/>`,
		`<INFO name="licence" value="${escapeXml(provenance.licence)}"/>`,
		...provenance.requiredCitations.map(
			(citation) => `<INFO name="required_citation" value="${escapeXml(citation)}"/>`
		),
		`<TABLE name="calibrators" nrows="${content.rows.length}">`,
		...fields.map((field, i) => {
			const meta = metas[i];
			const arraysize = meta.datatype === 'char' ? ' arraysize="*"' : '';
			return `<FIELD name="${escapeXml(field)}" datatype="${meta.datatype}"${arraysize}${attribute('unit', meta.unit)} ucd="${meta.ucd}"><DESCRIPTION>${escapeXml(meta.description)}</DESCRIPTION></FIELD>`;
		}),
		'<DATA><TABLEDATA>',
		...content.rows.map((row) => `<TR>${fields.map((field, i) => cell(row.values[field], metas[i])).join('')}</TR>`),
		'</TABLEDATA></DATA>',
		'</TABLE>',
		...valueSourcesTable(content),
		'</RESOURCE>',
		'</VOTABLE>',
		''
	];
	return lines.join('\n');
}

const SOURCE_FIELDS: { name: string; datatype: 'char' | 'double'; ucd: string; description: string }[] = [
	{ name: 'star', datatype: 'char', ucd: 'meta.id', description: 'Star name, as in the calibrators table' },
	{ name: 'field', datatype: 'char', ucd: 'meta.code', description: 'Column of the calibrators table' },
	{
		name: 'value',
		datatype: 'double',
		ucd: 'meta.number',
		description: 'The value taken (canonical unit of the column)'
	},
	{ name: 'replaced', datatype: 'char', ucd: 'meta.note', description: 'What the uploaded table held in that cell' },
	{ name: 'analysis', datatype: 'char', ucd: 'meta.id', description: 'Light-curve analysis (one star in one band)' },
	{ name: 'upload', datatype: 'char', ucd: 'meta.id', description: 'Light-curve upload of the analysis' },
	{ name: 'source_digest', datatype: 'char', ucd: 'meta.checksum', description: 'SHA-256 of the raw time series' },
	{ name: 'band', datatype: 'char', ucd: 'instr.bandpass', description: 'Band of the analysed series' },
	{ name: 'quantity', datatype: 'char', ucd: 'meta.code', description: 'Which result of the analysis' },
	{ name: 'engine_version', datatype: 'char', ucd: 'meta.version', description: 'Version of the analysis engine' }
];

function valueSourcesTable(content: CalibratorRevisionContent): string[] {
	const sources = content.value_sources;
	if (!sources) return [];
	const td = (value: string | number | boolean | null) =>
		value === null ? '<TD/>' : `<TD>${escapeXml(String(value))}</TD>`;
	return [
		`<TABLE name="value_sources" nrows="${sources.length}">`,
		'<DESCRIPTION>Values of the calibrators table taken from light-curve analyses, and the analysis of each</DESCRIPTION>',
		...SOURCE_FIELDS.map((field) => {
			const arraysize = field.datatype === 'char' ? ' arraysize="*"' : '';
			return `<FIELD name="${field.name}" datatype="${field.datatype}"${arraysize} ucd="${field.ucd}"><DESCRIPTION>${escapeXml(field.description)}</DESCRIPTION></FIELD>`;
		}),
		'<DATA><TABLEDATA>',
		...sources.map(
			(source) =>
				`<TR>${[
					td(source.star),
					td(source.field),
					td(source.value),
					td(source.replaced),
					td(source.light_curve.result),
					td(source.light_curve.upload),
					td(source.light_curve.source_digest),
					td(source.light_curve.band),
					td(source.light_curve.quantity),
					td(source.light_curve.engine_version)
				].join('')}</TR>`
		),
		'</TABLEDATA></DATA>',
		'</TABLE>'
	];
}
