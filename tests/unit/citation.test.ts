import { Cite } from '@citation-js/core';
import '@citation-js/plugin-bibtex';
import { describe, expect, test } from 'vitest';
import {
	bibtexKey,
	citationBibtex,
	citationCslJson,
	citationDataCite,
	citationText,
	type CitationSource
} from '../../src/lib/publishing/citation';

const SOURCE: CitationSource = {
	slug: 'invented-w-vi',
	version: 3,
	digest: `sha256:${'ab'.repeat(32)}`,
	title: 'Invented W_VI relation for 100% fundamental-mode stars & {friends} (demo)',
	url: 'http://127.0.0.1:3000/relations/invented-w-vi/versions/3',
	authors: [
		{ name: 'Imre Vasko', orcid: null },
		{ name: 'Anna Maria Lindqvist', orcid: '0000-0002-1825-0097' }
	],
	approvedBy: [{ name: 'Oluwaseun Brandt', orcid: '0000-0002-1825-0097' }],
	approvedAt: '2026-12-01T18:00:00Z',
	requiredCitations: ['Invented Survey Team (2026), Invented Journal 1, 1']
};

describe('citations of a frozen version', () => {
	test('the text names the version, the digest, the approver and the calibrator citation', () => {
		const text = citationText(SOURCE);
		expect(text).toContain('Vasko, I. & Lindqvist, A. M. (2026).');
		expect(text).toContain(`[invented-w-vi@3, ${SOURCE.digest}]`);
		expect(text).toContain('Approved by Oluwaseun Brandt on 2026-12-01.');
		expect(text).toContain('Please also cite the calibrator data: Invented Survey Team (2026)');
	});

	test('citation-js (an independent BibTeX parser) reads our BibTeX back to the same CSL fields', () => {
		// @citation-js/plugin-bibtex 0.7.9 parses the entry; its CSL output must match our own CSL-JSON.
		const bibtex = citationBibtex(SOURCE);
		const [parsed] = new Cite(bibtex).data as Record<string, unknown>[];
		const [ours] = citationCslJson(SOURCE);
		expect(parsed.id).toBe(bibtexKey(SOURCE));
		expect(parsed.title).toBe(SOURCE.title);
		expect(parsed.author).toEqual(ours.author);
		expect((parsed.issued as { 'date-parts': number[][] })['date-parts'][0].slice(0, 1)).toEqual([2026]);
		expect(parsed.URL).toBe(SOURCE.url);
		expect(parsed.version).toBe('3');
		expect(String(parsed.note)).toContain(SOURCE.digest);
	});

	test('CSL-JSON is accepted as input by citation-js and keeps the dataset type and version', () => {
		const [parsed] = new Cite(citationCslJson(SOURCE)).data as Record<string, unknown>[];
		expect(parsed.type).toBe('dataset');
		expect(parsed.version).toBe('3');
		expect(parsed.title).toBe(SOURCE.title);
	});

	test('DataCite metadata carries ORCID iDs as name identifiers and the digest as an identifier', () => {
		const metadata = citationDataCite(SOURCE) as {
			creators: { familyName: string; nameIdentifiers: { nameIdentifier: string }[] }[];
			identifiers: { identifier: string; identifierType: string }[];
			publicationYear: number;
			types: { resourceTypeGeneral: string };
		};
		expect(metadata.types.resourceTypeGeneral).toBe('Dataset');
		expect(metadata.publicationYear).toBe(2026);
		expect(metadata.creators.map((creator) => creator.familyName)).toEqual(['Vasko', 'Lindqvist']);
		expect(metadata.creators[1].nameIdentifiers[0].nameIdentifier).toBe('https://orcid.org/0000-0002-1825-0097');
		expect(metadata.identifiers).toEqual([{ identifier: SOURCE.digest, identifierType: 'sha256' }]);
	});
});
