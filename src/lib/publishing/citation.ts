/**
 * How to cite one frozen version: plain text, BibTeX, CSL-JSON and DataCite metadata. Every form names
 * the slug, version and digest, so a reader can fetch exactly what the author used, and carries the
 * calibrator set's required citations.
 */
export interface CitationPerson {
	/** Display name as the person gave it, e.g. "Imre Vasko". */
	name: string;
	/** ORCID iD (0000-0000-0000-0000) or null. */
	orcid: string | null;
}

export interface CitationSource {
	slug: string;
	version: number;
	digest: string;
	title: string;
	/** Absolute URL of the version's page. */
	url: string;
	/** The proposal's author(s). */
	authors: CitationPerson[];
	approvedBy: CitationPerson[];
	/** ISO 8601 UTC approval time. */
	approvedAt: string;
	/** Citations that users of the calibrator data must give. */
	requiredCitations: string[];
	publisher?: string;
}

const PUBLISHER = 'Candlebook';

/**
 * Given and family name from a display name: the last word is taken as the family name. Names that do
 * not follow that order are still shown whole in the text form and as `literal` where it matters.
 */
export function splitName(name: string): { given: string; family: string } {
	const words = name.trim().split(/\s+/);
	if (words.length === 1) return { given: '', family: words[0] };
	return { given: words.slice(0, -1).join(' '), family: words.at(-1)! };
}

const ref = (source: CitationSource) => `${source.slug}@${source.version}`;
const approvalDate = (source: CitationSource) => source.approvedAt.slice(0, 10);
const year = (source: CitationSource) => Number(source.approvedAt.slice(0, 4));

function authorList(people: CitationPerson[]): string {
	const names = people.map((person) => {
		const { given, family } = splitName(person.name);
		const initials = given
			.split(/[\s-]+/)
			.filter(Boolean)
			.map((part) => `${part[0]}.`)
			.join(' ');
		return initials ? `${family}, ${initials}` : family;
	});
	if (names.length <= 1) return names[0] ?? PUBLISHER;
	return `${names.slice(0, -1).join(', ')} & ${names.at(-1)}`;
}

function approvalNote(source: CitationSource): string {
	const approvers = source.approvedBy
		.map((person) => (person.orcid ? `${person.name} (ORCID ${person.orcid})` : person.name))
		.join(', ');
	return `Version ${source.version} (${ref(source)}), ${source.digest}; approved by ${approvers} on ${approvalDate(source)}.`;
}

export function citationText(source: CitationSource): string {
	const main = `${authorList(source.authors)} (${year(source)}). ${source.title}, version ${source.version} [${ref(source)}, ${source.digest}]. ${source.publisher ?? PUBLISHER}. ${source.url}. Approved by ${source.approvedBy.map((p) => p.name).join(', ')} on ${approvalDate(source)}.`;
	if (source.requiredCitations.length === 0) return main;
	return `${main}\nPlease also cite the calibrator data: ${source.requiredCitations.join('; ')}`;
}

/** Escapes BibTeX's special characters in a field value. */
export function escapeBibtex(value: string): string {
	return value.replace(/[\\{}&%$#_^~]/g, (char) => {
		switch (char) {
			case '\\':
				return '\\textbackslash{}';
			case '^':
				return '\\^{}';
			case '~':
				return '\\~{}';
			default:
				return `\\${char}`;
		}
	});
}

/** A BibTeX key of letters, digits and underscores only, which every BibTeX implementation accepts. */
export function bibtexKey(source: CitationSource): string {
	return `candlebook_${source.slug.replace(/[^A-Za-z0-9]/g, '_')}_v${source.version}`;
}

export function citationBibtex(source: CitationSource): string {
	const authors = source.authors.map((person) => {
		const { given, family } = splitName(person.name);
		return given ? `${escapeBibtex(family)}, ${escapeBibtex(given)}` : `{${escapeBibtex(family)}}`;
	});
	const fields: [string, string][] = [
		['title', `{${escapeBibtex(source.title)}}`],
		['author', authors.length ? authors.join(' and ') : `{${PUBLISHER}}`],
		['year', String(year(source))],
		['month', String(Number(source.approvedAt.slice(5, 7)))],
		['publisher', escapeBibtex(source.publisher ?? PUBLISHER)],
		['version', String(source.version)],
		['url', source.url],
		['note', escapeBibtex(approvalNote(source))]
	];
	if (source.requiredCitations.length > 0) {
		fields.push(['addendum', escapeBibtex(`Calibrator data: ${source.requiredCitations.join('; ')}`)]);
	}
	const body = fields.map(([name, value]) => `  ${name} = {${value}}`).join(',\n');
	return `@misc{${bibtexKey(source)},\n${body}\n}\n`;
}

export function citationCslJson(source: CitationSource): Record<string, unknown>[] {
	const [y, m, d] = approvalDate(source).split('-').map(Number);
	return [
		{
			id: ref(source),
			type: 'dataset',
			title: source.title,
			author: source.authors.map((person) => splitName(person.name)),
			issued: { 'date-parts': [[y, m, d]] },
			publisher: source.publisher ?? PUBLISHER,
			version: String(source.version),
			URL: source.url,
			note: [approvalNote(source), ...source.requiredCitations.map((c) => `Calibrator data: ${c}`)].join(' ')
		}
	];
}

const orcidIdentifier = (orcid: string | null) =>
	orcid
		? [{ nameIdentifier: `https://orcid.org/${orcid}`, nameIdentifierScheme: 'ORCID', schemeUri: 'https://orcid.org' }]
		: [];

/** DataCite Metadata Schema 4 attributes (JSON), ready to submit when minting a DOI elsewhere. */
export function citationDataCite(source: CitationSource): Record<string, unknown> {
	return {
		types: { resourceTypeGeneral: 'Dataset', resourceType: 'Period–luminosity relation' },
		titles: [{ title: source.title }],
		creators: source.authors.map((person) => {
			const { given, family } = splitName(person.name);
			return {
				name: given ? `${family}, ${given}` : family,
				nameType: 'Personal',
				givenName: given,
				familyName: family,
				nameIdentifiers: orcidIdentifier(person.orcid)
			};
		}),
		contributors: source.approvedBy.map((person) => ({
			name: person.name,
			nameType: 'Personal',
			contributorType: 'Other',
			nameIdentifiers: orcidIdentifier(person.orcid)
		})),
		publisher: source.publisher ?? PUBLISHER,
		publicationYear: year(source),
		version: String(source.version),
		url: source.url,
		dates: [{ date: approvalDate(source), dateType: 'Issued' }],
		identifiers: [{ identifier: source.digest, identifierType: 'sha256' }],
		alternateIdentifiers: [{ alternateIdentifier: ref(source), alternateIdentifierType: 'Candlebook reference' }],
		descriptions: [{ description: approvalNote(source), descriptionType: 'TechnicalInfo' }],
		...(source.requiredCitations.length
			? {
					relatedItems: source.requiredCitations.map((title) => ({
						relationType: 'References',
						relatedItemType: 'Other',
						titles: [{ title }]
					}))
				}
			: {})
	};
}
